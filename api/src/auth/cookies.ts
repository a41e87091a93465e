import type { Response } from 'express';
import { CSRF_COOKIE, SESSION_COOKIE } from '../../../shared/api/auth.js';
import type { Env } from '../../../shared/env.js';
import { csrfTokenFor } from './sessions.js';

/** httpOnly session cookie plus a readable CSRF cookie the web app echoes in X-CSRF-Token. */
export function setSessionCookies(res: Response, env: Env, session: { jwt: string; sessionId: string; expiresAt: Date }): void {
  const secure = env.PUBLIC_URL.startsWith('https:');
  const common = { sameSite: 'lax' as const, secure, path: '/', expires: session.expiresAt };
  res.cookie(SESSION_COOKIE, session.jwt, { ...common, httpOnly: true });
  res.cookie(CSRF_COOKIE, csrfTokenFor(env.SESSION_SECRET, session.sessionId), { ...common, httpOnly: false });
}

export function clearSessionCookies(res: Response): void {
  res.clearCookie(SESSION_COOKIE, { path: '/' });
  res.clearCookie(CSRF_COOKIE, { path: '/' });
}

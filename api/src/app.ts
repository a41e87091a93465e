import { existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import cookieParser from 'cookie-parser';
import express, { type Express, type RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import helmet from 'helmet';
import { authenticate } from './auth/middleware.js';
import type { AppDeps } from './deps.js';
import { apiNotFound, errorMiddleware } from './http/error-middleware.js';
import { HttpError } from './http/http-error.js';
import { dependencyPorts } from './http/unavailable.js';
import './http/locals.js';
import { requestId } from './http/request-id.js';
import { adminRouter } from './routes/admin.js';
import { adminConsoleRouter } from './routes/admin-console.js';
import { authRouter } from './routes/auth.js';
import { devRouter } from './routes/dev.js';
import { figuresRouter } from './routes/figures.js';
import { healthRouter } from './routes/health.js';
import { invitationsRouter } from './routes/invitations.js';
import { labsRouter } from './routes/labs.js';
import { meRouter } from './routes/me.js';
import { artifactsRouter } from './routes/artifacts.js';
import { estimatesRouter } from './routes/estimates.js';
import { openapiRouter } from './routes/openapi.js';
import { runsRouter } from './routes/runs.js';
import { seriesRouter } from './routes/series.js';
import { RAW_BODY_PATHS, uploadsRouter } from './routes/uploads.js';
import { creditsRouter } from './routes/credits.js';
import { PAYMENTS_WEBHOOK_PATH, paymentsRouter } from './routes/payments.js';

export const BODY_LIMIT = '1mb';
export const DEFAULT_DIST_DIR = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../dist');

/** A body that is not JSON would otherwise reach the schemas as "undefined"; say what is expected instead. */
const requireJsonBody: RequestHandler = (req, _res, next) => {
  if (RAW_BODY_PATHS.includes(req.path)) return next();
  const hasBody = Number(req.get('content-length') ?? 0) > 0 || req.get('transfer-encoding') !== undefined;
  if (hasBody && !req.is('application/json')) throw new HttpError(415, 'send the request body as JSON (Content-Type: application/json)');
  next();
};

/** Every router under /api, in mount order; the route × role test walks these to prove it covers each route. */
export const API_ROUTERS = {
  healthRouter, authRouter, meRouter, labsRouter, invitationsRouter, runsRouter, artifactsRouter, seriesRouter, uploadsRouter, estimatesRouter,
  figuresRouter, adminRouter, adminConsoleRouter, openapiRouter, devRouter, creditsRouter, paymentsRouter,
} as const;

export type AppOptions = { distDir?: string };

/**
 * The Express app: `/api/*` routes by concern, then the built web app with a single-page fallback.
 * All dependencies come in through `deps`; the app opens no connections of its own.
 */
export function createApp(deps: AppDeps, options: AppOptions = {}): Express {
  const { env } = deps;
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');
  app.use(requestId);
  const s3Origin = new URL(env.S3_ENDPOINT).origin;
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          // tiles and previews come from our origin, blobs/data URLs from the viewer, signed links from object storage
          'img-src': ["'self'", 'data:', 'blob:', s3Origin],
          'connect-src': ["'self'", s3Origin],
        },
      },
    }),
  );

  const api = express.Router();
  // the webhook's signature covers the exact bytes sent, so that one route keeps its raw body (express.json then skips it)
  api.use(PAYMENTS_WEBHOOK_PATH, express.raw({ type: '*/*', limit: BODY_LIMIT }));
  api.use(requireJsonBody, express.json({ limit: BODY_LIMIT }), cookieParser(), authenticate(deps.db, env.SESSION_SECRET));
  // Guessing passwords or flooding mailboxes: a per-address budget on the anonymous auth forms.
  api.use(
    ['/auth/sign-in', '/auth/sign-up', '/auth/password-reset'],
    rateLimit({ windowMs: 15 * 60 * 1000, limit: 50, standardHeaders: 'draft-8', legacyHeaders: false, skip: () => env.NODE_ENV === 'test',
      handler: (_req, _res, next) => next(new HttpError(429, 'too many attempts; wait a few minutes and try again')) }),
  );
  for (const [name, router] of Object.entries(API_ROUTERS)) {
    // the mail outbox exists only on developers' machines and in tests
    if (name === 'devRouter' && env.NODE_ENV === 'production') continue;
    api.use(router(deps));
  }
  api.use(apiNotFound);
  app.use('/api', api);

  const distDir = options.distDir ?? DEFAULT_DIST_DIR;
  if (existsSync(path.join(distDir, 'index.html'))) {
    app.use(express.static(distDir, { index: false, maxAge: '1h' }));
    // Express 5 / path-to-regexp 8 syntax; every non-API path is a web route.
    // relative to `root`: send refuses a whole path with a dot folder in it (npm test's .local/test/dist)
    app.get('/{*splat}', (_req, res) => res.sendFile('index.html', { root: distDir }));
  }

  app.use(errorMiddleware(deps.log, dependencyPorts(env)));
  return app;
}

import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { CSRF_COOKIE, CSRF_HEADER, SESSION_COOKIE } from '../../../shared/api/auth.js';
import { figureResponseSchema, figureVersionResponseSchema, type FigureDetail, type FigureVersion } from '../../../shared/api/figures.js';
import { runResponseSchema, type Run } from '../../../shared/api/runs.js';
import { loadEnv } from '../../../shared/env.js';
import { DEMO_FIGURE_SLUG, DEMO_SIGN_INS } from './demo.js';

/**
 * The demo's last step, done the way its author would do it in the web app: once the figure's run
 * has been computed by the farm, order the figure's print (the figure page's "Order the print":
 * POST /api/figures/:slug/versions with the default formats), wait until the farm has printed it,
 * and publish it (POST /api/figures/:slug/publish). Everything goes over HTTP to the running API,
 * signed in with the demo author's printed credentials, so the demo passes every rule a user does.
 * It never throws: the answer says what happened.
 */

export type DemoFinish =
  | { outcome: 'published'; slug: string; url: string; version: number }
  /** nothing to do: the figure was published (or withdrawn) before */
  | { outcome: 'left'; reason: string }
  | { outcome: 'gave-up'; reason: string };

export type FinishOptions = {
  /** how long the figure's run may take to be computed and drawn (default 10 minutes) */
  runTimeoutMs?: number;
  /** how long the farm may take to print the figure (default 5 minutes) */
  printTimeoutMs?: number;
  /** pause between two looks at the run or the print (default 1 s) */
  pollMs?: number;
  /** progress lines (default: none) */
  log?: (line: string) => void;
};

class GiveUp extends Error {}

/** A signed-in browser, reduced to what the web app's client does: cookies, and the CSRF header on writes. */
class Session {
  private cookie = '';
  private csrf = '';
  constructor(private readonly base: string) {}

  async signIn(email: string, password: string): Promise<void> {
    const res = await this.call('POST', '/api/auth/sign-in', { email, password });
    if (res.status !== 200) throw new GiveUp(`the demo author could not sign in (${res.status}: ${res.error})`);
    const jar = new Map<string, string>();
    for (const c of res.setCookies) {
      const pair = c.split(';')[0]!;
      const i = pair.indexOf('=');
      jar.set(pair.slice(0, i), pair.slice(i + 1));
    }
    const session = jar.get(SESSION_COOKIE);
    const csrf = jar.get(CSRF_COOKIE);
    if (!session || !csrf) throw new GiveUp('signing in set no session cookies');
    this.cookie = `${SESSION_COOKIE}=${session}; ${CSRF_COOKIE}=${csrf}`;
    this.csrf = decodeURIComponent(csrf);
  }

  async call(method: 'GET' | 'POST', route: string, body?: unknown) {
    const headers: Record<string, string> = { Accept: 'application/json' };
    if (this.cookie) headers.Cookie = this.cookie;
    if (method !== 'GET') headers[CSRF_HEADER] = this.csrf;
    if (body !== undefined) headers['Content-Type'] = 'application/json';
    const res = await fetch(new URL(route, this.base), { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
    const text = await res.text();
    const json: unknown = text ? JSON.parse(text) : undefined;
    const error = typeof (json as { error?: unknown } | undefined)?.error === 'string' ? (json as { error: string }).error : `HTTP ${res.status}`;
    return { status: res.status, body: json, error, setCookies: res.headers.getSetCookie() };
  }

  async figure(slug: string): Promise<FigureDetail> {
    const res = await this.call('GET', `/api/figures/${slug}`);
    if (res.status !== 200) throw new GiveUp(`the demo figure cannot be read (${res.status}: ${res.error})`);
    const answer = figureResponseSchema.parse(res.body);
    // a member of the lab always gets the figure itself, withdrawn or not
    if (answer.withdrawn) throw new GiveUp('the demo figure was withdrawn');
    return answer.figure;
  }

  async run(id: string): Promise<Run> {
    const res = await this.call('GET', `/api/runs/${id}`);
    if (res.status !== 200) throw new GiveUp(`the figure's run cannot be read (${res.status}: ${res.error})`);
    return runResponseSchema.parse(res.body).run;
  }
}

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));
const duration = (ms: number) => (ms >= 60_000 && ms % 60_000 === 0 ? `${ms / 60_000} min` : `${Number((ms / 1000).toFixed(1))} s`);

/** Poll `look` until it returns a value; give up with `late()` after `timeoutMs`. */
async function until<T>(look: () => Promise<T | null>, timeoutMs: number, pollMs: number, late: () => string): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const got = await look();
    if (got !== null) return got;
    if (Date.now() >= deadline) throw new GiveUp(late());
    await pause(pollMs);
  }
}

/** Print and publish the demo figure through the API at `baseUrl` (see the note at the top). */
export async function finishDemo(baseUrl: string, options: FinishOptions = {}): Promise<DemoFinish> {
  const { runTimeoutMs = 10 * 60_000, printTimeoutMs = 5 * 60_000, pollMs = 1000, log = () => {} } = options;
  const slug = DEMO_FIGURE_SLUG;
  const author = DEMO_SIGN_INS.find((s) => s.role === 'author')!;
  try {
    const session = new Session(baseUrl);
    await session.signIn(author.email, author.password);
    const start = await session.figure(slug);
    if (start.publishedAt !== null) return { outcome: 'left', reason: start.withdrawnAt ? 'the demo figure was published and then withdrawn' : 'the demo figure is already published' };

    log(`waiting for run ${start.runId} to be computed and drawn`);
    let last: Run | null = null;
    await until(
      async () => {
        last = await session.run(start.runId);
        if (last.status === 'finished') return last;
        if (last.status === 'failed') throw new GiveUp(`its run failed: ${last.error ?? 'no reason given'}`);
        if (last.status === 'cancelled') throw new GiveUp('its run was cancelled');
        return null;
      },
      runTimeoutMs,
      pollMs,
      () => `its run was still ${last?.status ?? 'unknown'}${last?.stage ? ` (${last.stage})` : ''} after ${duration(runTimeoutMs)}`,
    );

    // an order made meanwhile (by hand, or by a start stopped half-way) is awaited rather than repeated
    let order: FigureVersion | undefined = (await session.figure(slug)).versions.find((v) => v.status !== 'failed');
    if (!order) {
      // the figure page's "Order the print" sends no formats: PNG, TIFF and PDF
      const res = await session.call('POST', `/api/figures/${slug}/versions`, {});
      if (res.status !== 202) throw new GiveUp(`ordering the print was refused (${res.status}: ${res.error})`);
      order = figureVersionResponseSchema.parse(res.body).version;
      log(`ordered print version ${order.number}`);
    }
    const number = order.number;
    let now: FigureVersion | undefined = order;
    const ready = await until(
      async () => {
        now = (await session.figure(slug)).versions.find((v) => v.number === number);
        if (!now) throw new GiveUp(`print version ${number} disappeared`);
        if (now.status === 'failed') throw new GiveUp(`the print failed: ${now.error ?? 'no reason given'}`);
        return now.status === 'ready' ? now : null;
      },
      printTimeoutMs,
      pollMs,
      () => `print version ${number} was still ${now?.status ?? 'unknown'} after ${duration(printTimeoutMs)}`,
    );
    log(`print version ${ready.number} ready: ${ready.files.map((f) => f.format).join(', ')}`);

    const res = await session.call('POST', `/api/figures/${slug}/publish`);
    if (res.status !== 200) throw new GiveUp(`publishing was refused (${res.status}: ${res.error})`);
    return { outcome: 'published', slug, url: new URL(`/f/${slug}`, baseUrl).toString(), version: ready.number };
  } catch (err) {
    if (err instanceof GiveUp) return { outcome: 'gave-up', reason: err.message };
    // fetch says only "fetch failed"; its cause names the refused connection or the like
    const cause = err instanceof Error && err.cause instanceof Error ? ` (${err.cause.message})` : '';
    return { outcome: 'gave-up', reason: `talking to the API at ${baseUrl} went wrong: ${err instanceof Error ? err.message : String(err)}${cause}` };
  }
}

// `tsx api/src/seed/demo-finisher.ts` finishes the demo on the API at PUBLIC_URL and prints what happened.
if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  void finishDemo(loadEnv().PUBLIC_URL, { log: (line) => console.log(line) }).then((result) => {
    console.log(JSON.stringify(result));
    process.exitCode = result.outcome === 'gave-up' ? 1 : 0;
  });
}

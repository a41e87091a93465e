import { readFileSync } from 'node:fs';
import { sql } from 'drizzle-orm';
import { Router } from 'express';
import { healthResponseSchema, readyResponseSchema } from '../../../shared/api/health.js';
import type { AppDeps } from '../deps.js';
import { respond } from '../http/respond.js';

const VERSION: string = JSON.parse(readFileSync(new URL('../../../package.json', import.meta.url), 'utf8')).version;

export function healthRouter({ db, queue }: AppDeps): Router {
  const r = Router();

  r.get('/health', (_req, res) => {
    respond(res, 200, healthResponseSchema, { ok: true, version: VERSION });
  });

  r.get('/health/ready', async (_req, res) => {
    const [postgres, redis] = await Promise.all([
      db.execute(sql`select 1`).then(() => true, () => false),
      queue.ping(),
    ]);
    const ok = postgres && redis;
    const down = [!postgres && 'PostgreSQL', !redis && 'Redis'].filter(Boolean).join(' and ');
    respond(res, ok ? 200 : 503, readyResponseSchema, { ok, postgres, redis, ...(ok ? {} : { error: `not ready: ${down} not answering` }) });
  });

  return r;
}

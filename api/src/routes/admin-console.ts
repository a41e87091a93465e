import { eq } from 'drizzle-orm';
import { Router } from 'express';
import { labs } from '../../../drizzle/schema.js';
import {
  adminLabStateResponseSchema,
  adminStorageResponseSchema,
  adminUsageQuerySchema,
  adminUsageResponseSchema,
  allowanceRequestSchema,
  auditQuerySchema,
  auditResponseSchema,
  farmHealthResponseSchema,
  farmJobParamsSchema,
  retentionNoticeResponseSchema,
  retryJobResponseSchema,
  suspensionRequestSchema,
} from '../../../shared/api/admin.js';
import { labParamsSchema } from '../../../shared/api/labs.js';
import { authOf, requireAdmin, requireUser } from '../auth/middleware.js';
import { monthOf } from '../billing/accounts.js';
import type { AppDeps } from '../deps.js';
import { respond } from '../http/respond.js';
import { validate } from '../http/validate.js';
import { createFarmHealth, type FarmHealth } from '../queue/farm-health.js';
import { allowanceOf } from '../billing/ledger.js';
import { setAllowance } from '../services/admin-allowance.js';
import { auditCsv, auditKinds, auditTrail } from '../services/admin-audit.js';
import { farmReport, retryFailedJob } from '../services/admin-farm.js';
import { sendRetentionNotice, storageReport } from '../services/admin-storage.js';
import { reinstateLab, suspendLab } from '../services/admin-suspension.js';
import { allLabUsage, monthsUpTo, usageCsv } from '../services/admin-usage.js';
import { runUsageOf } from '../storage/run-usage.js';

/** The admin console's routes; `farm` lets tests read their own BullMQ prefix (otherwise one reader per request on the product's). */
export type AdminConsoleDeps = AppDeps & { farm?: FarmHealth };

export function adminConsoleRouter(deps: AdminConsoleDeps): Router {
  const { db, env, queue, mailer, blobs } = deps;
  const r = Router();
  r.use('/admin', requireUser, requireAdmin);

  async function withFarm<T>(fn: (farm: FarmHealth) => Promise<T>): Promise<T> {
    if (deps.farm) return fn(deps.farm);
    const farm = createFarmHealth(env.REDIS_URL, { prefix: env.BULLMQ_PREFIX });
    try {
      return await fn(farm);
    } finally {
      await farm.close();
    }
  }

  async function usage(months: number) {
    const now = new Date();
    const list = monthsUpTo(now, months);
    return { month: monthOf(now), months: list, labs: await allLabUsage(db, list, await runUsageOf({ db, blobs }), now) };
  }

  r.get('/admin/usage', async (req, res) => {
    const { months } = validate.query(req, adminUsageQuerySchema);
    respond(res, 200, adminUsageResponseSchema, await usage(months));
  });

  r.get('/admin/usage.csv', async (req, res) => {
    const { months } = validate.query(req, adminUsageQuerySchema);
    const u = await usage(months);
    res.type('text/csv; charset=utf-8').attachment(`usage-${u.months[0]}-to-${u.month}.csv`).send(usageCsv(u.labs));
  });

  const labState = async (labId: string, row: { suspendedAt: Date | null; suspendedReason: string | null }, jobsAffected: number) => ({
    labId,
    suspendedAt: row.suspendedAt?.toISOString() ?? null,
    suspendedReason: row.suspendedReason,
    freeAllowance: (await allowanceOf(db, labId)).freeAllowance,
    jobsAffected,
  });

  r.put('/admin/labs/:labId/allowance', async (req, res) => {
    const { labId } = validate.params(req, labParamsSchema);
    const body = validate.body(req, allowanceRequestSchema);
    await setAllowance(db, labId, authOf(res).user.id, body);
    const [row] = await db.select().from(labs).where(eq(labs.id, labId));
    respond(res, 200, adminLabStateResponseSchema, await labState(labId, row!, 0));
  });

  r.post('/admin/labs/:labId/suspension', async (req, res) => {
    const { labId } = validate.params(req, labParamsSchema);
    const { reason } = validate.body(req, suspensionRequestSchema);
    const row = await suspendLab({ db, queue, log: deps.log }, labId, authOf(res).user.id, reason);
    respond(res, 200, adminLabStateResponseSchema, await labState(labId, row, row.jobsAffected));
  });

  r.post('/admin/labs/:labId/reinstatement', async (req, res) => {
    const { labId } = validate.params(req, labParamsSchema);
    const { reason } = validate.body(req, suspensionRequestSchema);
    const row = await reinstateLab({ db, queue, log: deps.log }, labId, authOf(res).user.id, reason);
    respond(res, 200, adminLabStateResponseSchema, await labState(labId, row, row.jobsAffected));
  });

  r.get('/admin/farm', async (_req, res) => {
    respond(res, 200, farmHealthResponseSchema, await withFarm((farm) => farmReport(db, farm)));
  });

  r.post('/admin/farm/jobs/:queue/:jobId/retry', async (req, res) => {
    const { queue: name, jobId } = validate.params(req, farmJobParamsSchema);
    respond(res, 200, retryJobResponseSchema, await withFarm((farm) => retryFailedJob(db, farm, authOf(res).user.id, name, jobId)));
  });

  r.get('/admin/storage', async (_req, res) => {
    respond(res, 200, adminStorageResponseSchema, await storageReport({ db, blobs }));
  });

  r.post('/admin/labs/:labId/retention-notice', async (req, res) => {
    const { labId } = validate.params(req, labParamsSchema);
    respond(res, 200, retentionNoticeResponseSchema, await sendRetentionNotice({ db, env, mailer, blobs }, labId, authOf(res).user.id));
  });

  r.get('/admin/audit', async (req, res) => {
    const q = validate.query(req, auditQuerySchema);
    respond(res, 200, auditResponseSchema, { events: await auditTrail(db, q), kinds: await auditKinds(db) });
  });

  r.get('/admin/audit.csv', async (req, res) => {
    const q = validate.query(req, auditQuerySchema);
    res.type('text/csv; charset=utf-8').attachment('audit-trail.csv').send(auditCsv(await auditTrail(db, q)));
  });

  return r;
}

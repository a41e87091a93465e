import { and, asc, count, desc, eq, sql, type SQL } from 'drizzle-orm';
import { Router } from 'express';
import {
  FINAL_RUN_STATUSES,
  createRunRequestSchema,
  rerunRequestSchema,
  listRunsQuerySchema,
  listRunsResponseSchema,
  runParamsSchema,
  runResponseSchema,
  type ListRunsQuery,
} from '../../../shared/api/runs.js';
import { newRunSpecSchema } from '../../../shared/run-spec.js';
import { JOB_NAMES, type JobItem } from '../../../shared/jobs.js';
import { runs, users } from '../../../drizzle/schema.js';
import { authOf, checkLabAccess, requireUser, requireVerified } from '../auth/middleware.js';
import type { AppDeps } from '../deps.js';
import { badRequest, conflict, forbidden, notFound } from '../http/http-error.js';
import { respond } from '../http/respond.js';
import { toIssues, validate } from '../http/validate.js';
import { audit } from '../services/audit.js';
import { streamRunEvents } from '../services/run-events.js';
import { createRuns } from '../services/runs.js';
import { activeLabOf } from '../services/me.js';
import { runView } from '../services/views.js';

const SORT_COLUMNS: Record<ListRunsQuery['sort'], SQL | typeof runs.createdAt> = {
  createdAt: sql`${runs.createdAt}`,
  finishedAt: sql`${runs.finishedAt}`,
  title: sql`lower(${runs.title})`,
  status: sql`${runs.status}`,
  chips: sql`(${runs.spec}->>'chips')::numeric`,
};

/** The lattice filter matches a preset name, a periodic graph's name, or "periodic" for any periodic graph. */
function latticeCondition(lattice: string): SQL {
  if (lattice === 'periodic') return sql`${runs.spec}->'lattice' ? 'periodic'`;
  return sql`(${runs.spec}->'lattice'->>'preset' = ${lattice} or ${runs.spec}->'lattice'->>'name' = ${lattice})`;
}

export function runsRouter({ db, queue, log }: AppDeps): Router {
  const r = Router();
  const selectRun = () => db.select({ run: runs, author: { id: users.id, name: users.name } }).from(runs).innerJoin(users, eq(users.id, runs.authorId));
  const missing = () => notFound('run not found');

  /** The run and the caller's access to its lab; another lab's run is "not found". */
  async function loadRun(id: string, res: Parameters<typeof authOf>[0]) {
    const [row] = await selectRun().where(eq(runs.id, id));
    if (!row) throw missing();
    const access = await checkLabAccess(db, authOf(res).user, row.run.labId, 'read', missing());
    return { ...row, access };
  }

  r.get('/runs', requireUser, async (req, res) => {
    const q = validate.query(req, listRunsQuerySchema);
    const user = authOf(res).user;
    const labId = q.labId ?? (await activeLabOf(db, user));
    if (!labId) throw badRequest('no labId given and you belong to no lab yet');
    await checkLabAccess(db, user, labId, 'read');
    const where = and(
      eq(runs.labId, labId),
      q.status ? eq(runs.status, q.status) : undefined,
      q.author ? eq(runs.authorId, q.author) : undefined,
      q.lattice ? latticeCondition(q.lattice) : undefined,
    );
    const key = SORT_COLUMNS[q.sort];
    const direction = q.order === 'asc' ? asc : desc;
    const [rows, [total]] = await Promise.all([
      selectRun()
        .where(where)
        // ties (and unfinished runs when sorting by finishedAt) fall back to newest first, ids last for a stable order
        .orderBy(sql`${direction(key)} nulls last`, desc(runs.createdAt), asc(runs.id))
        .limit(q.pageSize)
        .offset((q.page - 1) * q.pageSize),
      db.select({ n: count() }).from(runs).where(where),
    ]);
    respond(res, 200, listRunsResponseSchema, {
      runs: rows.map((x) => runView(x.run, x.author)),
      total: total!.n,
      page: q.page,
      pageSize: q.pageSize,
    });
  });

  r.get('/runs/:id', requireUser, async (req, res) => {
    const { id } = validate.params(req, runParamsSchema);
    const { run, author } = await loadRun(id, res);
    respond(res, 200, runResponseSchema, { run: runView(run, author) });
  });

  r.post('/runs', requireUser, requireVerified, async (req, res) => {
    const body = validate.body(req, createRunRequestSchema);
    const user = authOf(res).user;
    await checkLabAccess(db, user, body.labId, 'member');
    const { rows: [run] } = await createRuns({ db, queue, log }, user, body.labId, [{ title: body.title, spec: body.spec }]);
    respond(res, 201, runResponseSchema, { run: runView(run!, { id: user.id, name: user.name }) });
  });

  /** The same specification again, as a new run in the same lab (say, after a failure or a cancel). */
  r.post('/runs/:id/rerun', requireUser, requireVerified, async (req, res) => {
    const { id } = validate.params(req, runParamsSchema);
    const body = validate.body(req, rerunRequestSchema);
    const user = authOf(res).user;
    const { run } = await loadRun(id, res);
    await checkLabAccess(db, user, run.labId, 'member');
    // a run stored before today's rules (say, of 0 grains) must not be run, and charged, again as it was
    const fresh = newRunSpecSchema.safeParse(run.spec);
    if (!fresh.success) {
      const issues = toIssues(fresh.error).map((i) => ({ path: i.path ? `spec.${i.path}` : 'spec', message: i.message }));
      throw badRequest(`this run's specification is not accepted for a new run (${issues.map((i) => `${i.path}: ${i.message}`).join('; ')}); duplicate it with edits instead`, issues);
    }
    const { rows: [again] } = await createRuns({ db, queue, log }, user, run.labId, [{ title: body.title ?? run.title, spec: run.spec }], { action: 'run.rerun', detail: { from: run.id } });
    respond(res, 201, runResponseSchema, { run: runView(again!, { id: user.id, name: user.name }) });
  });

  /** Live progress as server-sent events, read from PostgreSQL (the source of truth) once a second. */
  r.get('/runs/:id/events', requireUser, async (req, res) => {
    const { id } = validate.params(req, runParamsSchema);
    await loadRun(id, res);
    streamRunEvents(res, async () => {
      const [row] = await selectRun().where(eq(runs.id, id));
      return row ? runView(row.run, row.author) : null;
    });
  });

  r.post('/runs/:id/cancel', requireUser, async (req, res) => {
    const { id } = validate.params(req, runParamsSchema);
    const user = authOf(res).user;
    const { run, author, access } = await loadRun(id, res);
    const allowed = run.authorId === user.id || access.role === 'manager' || user.isAdmin;
    if (!allowed) throw forbidden('only the run\'s author, a lab manager or an admin can cancel it');
    if (FINAL_RUN_STATUSES.includes(run.status)) throw conflict(`run is already ${run.status}`);
    const updated = await db.transaction(async (tx) => {
      const [row] = await tx
        .update(runs)
        .set({ status: 'cancelled', finishedAt: new Date(), updatedAt: new Date() })
        .where(and(eq(runs.id, id), sql`${runs.status} not in ('finished', 'failed', 'cancelled')`))
        .returning();
      if (!row) throw conflict('run finished while it was being cancelled');
      await audit(tx, { actorId: user.id, labId: run.labId, action: 'run.cancel', subjectType: 'run', subjectId: id });
      return row;
    });
    const job: JobItem = { name: JOB_NAMES.computeRun, data: { runId: id, spec: run.spec } };
    // A job already running notices the status; a waiting one is dropped here. While Redis is away
    // the cancellation still stands: a worker that takes the job later skips a cancelled run, and the
    // outbox sends no job for it.
    await queue.remove(job).catch((err: unknown) => log.warn('the cancelled run\'s job stays on the queue until a worker skips it', { runId: id, err }));
    respond(res, 200, runResponseSchema, { run: runView(updated, author) });
  });

  return r;
}

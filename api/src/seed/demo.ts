import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { count, eq, sql } from 'drizzle-orm';
import { loadEnv, type Env } from '../../../shared/env.js';
import { JOB_NAMES } from '../../../shared/jobs.js';
import { figureSpecSchema, specWithCaption, startingComposition } from '../../../shared/print-spec.js';
import { runSpecSchema, type RunSpecInput } from '../../../shared/run-spec.js';
import { figures, labs, memberships, runs, users } from '../../../drizzle/schema.js';
import { bookOfflinePurchase } from '../billing/adjustments.js';
import { reserveForRuns } from '../billing/gate.js';
import { setAllowance } from '../services/admin-allowance.js';
import { hashPassword } from '../auth/passwords.js';
import { connectDatabase } from '../db/client.js';
import { createJobQueue } from '../queue/job-queue.js';
import { dispatchOutbox, recordJobs } from '../queue/outbox.js';
import { audit } from '../services/audit.js';

/**
 * Demo data for a developer's machine: an invented lab and people (no real persons or institutions).
 * Runs are seeded as queued with no statistics; the renderer worker computes them when it starts,
 * so every number the demo shows is a real result.
 */

export type DemoSignIn = { role: 'author' | 'manager' | 'admin' | 'other lab'; email: string; password: string };

/** Printed by `npm start`; the passwords are meant to be read aloud and typed. */
export const DEMO_SIGN_INS: readonly DemoSignIn[] = [
  { role: 'author', email: 'maren.tollis@demo.toppleworks.local', password: 'demo-author-pass' },
  { role: 'manager', email: 'perrin.ashcombe@demo.toppleworks.local', password: 'demo-manager-pass' },
  { role: 'admin', email: 'ysolde.marchetti@demo.toppleworks.local', password: 'demo-admin-pass' },
  { role: 'other lab', email: 'caius.wendell@demo.toppleworks.local', password: 'demo-other-pass' },
];

const NAMES: Record<DemoSignIn['role'], string> = {
  author: 'Maren Tollis',
  manager: 'Perrin Ashcombe',
  admin: 'Ysolde Marchetti',
  'other lab': 'Caius Wendell',
};

export const DEMO_LAB = 'Tessellate Hill Sandpile Group';
export const DEMO_OTHER_LAB = 'Lowmoor Combinatorics Circle';
/**
 * The demo's figure of its first run: seeded as a draft, since publishing needs a ready print of the
 * finished run; `npm start` then has it printed and published by its author (./demo-finisher.ts).
 */
export const DEMO_FIGURE_SLUG = 'square-lattice-one-hundred-thousand';

type DemoRun = { lab: 'main' | 'other'; by: DemoSignIn['role']; title: string; spec: RunSpecInput };

/** Sizes a 2-core laptop finishes in seconds to a minute or so. */
export const DEMO_RUNS: readonly DemoRun[] = [
  { lab: 'main', by: 'author', title: 'One hundred thousand grains on the square lattice', spec: { lattice: { preset: 'square' }, chips: 100_000 } },
  { lab: 'main', by: 'author', title: 'Triangular lattice over a constant background of 2', spec: { lattice: { preset: 'triangular' }, chips: 50_000, background: { kind: 'constant', height: 2 } } },
  { lab: 'main', by: 'manager', title: 'Honeycomb on a 1/0 checkerboard', spec: { lattice: { preset: 'honeycomb' }, chips: 30_000, background: { kind: 'checkerboard', a: 1, b: 0 } } },
  { lab: 'main', by: 'manager', title: 'Square lattice on i.i.d. heights 0 to 2', spec: { lattice: { preset: 'square' }, chips: 20_000, background: { kind: 'random', seed: 20261201, weights: [1, 1, 1] } } },
  { lab: 'other', by: 'other lab', title: 'A thousand and one grains on the line', spec: { lattice: { preset: 'line' }, chips: 1001 } },
  { lab: 'other', by: 'other lab', title: 'Twenty thousand grains on the honeycomb', spec: { lattice: { preset: 'honeycomb' }, chips: 20_000 } },
];

export type SeedOptions = { /** BullMQ key prefix (tests keep their jobs apart) */ queuePrefix?: string };

/** Seed an empty database (and queue its runs); returns null, touching nothing, when it already has users. */
export async function seedDemo(env: Env, options: SeedOptions = {}): Promise<{ signIns: DemoSignIn[] } | null> {
  const database = connectDatabase(env.DATABASE_URL, 2);
  const queue = createJobQueue(env.REDIS_URL, { prefix: options.queuePrefix ?? env.BULLMQ_PREFIX });
  try {
    const hashes = await Promise.all(DEMO_SIGN_INS.map((s) => hashPassword(s.password)));
    const seeded = await database.db.transaction(async (tx) => {
      // Two starts at once must not both seed: the lock serialises them, the count decides.
      await tx.execute(sql`select pg_advisory_xact_lock(7461626)`);
      const [existing] = await tx.select({ n: count() }).from(users);
      if (existing!.n > 0) return false;

      const people = new Map<DemoSignIn['role'], string>();
      for (const [i, s] of DEMO_SIGN_INS.entries()) {
        const [u] = await tx
          .insert(users)
          .values({ email: s.email, name: NAMES[s.role], passwordHash: hashes[i]!, emailVerifiedAt: new Date(), isAdmin: s.role === 'admin' })
          .returning({ id: users.id });
        people.set(s.role, u!.id);
      }
      const who = (r: DemoSignIn['role']) => people.get(r)!;
      const [main] = await tx.insert(labs).values({ name: DEMO_LAB }).returning();
      const [other] = await tx.insert(labs).values({ name: DEMO_OTHER_LAB }).returning();
      const labIds = { main: main!.id, other: other!.id };
      await tx.insert(memberships).values([
        { labId: main!.id, userId: who('manager'), role: 'manager' },
        { labId: main!.id, userId: who('author'), role: 'author', monthlyQuota: 2000 },
        { labId: main!.id, userId: who('admin'), role: 'author' },
        { labId: other!.id, userId: who('other lab'), role: 'manager' },
      ]);
      for (const role of ['author', 'manager', 'admin'] as const) {
        await tx.update(users).set({ activeLabId: main!.id }).where(eq(users.id, who(role)));
      }
      await tx.update(users).set({ activeLabId: other!.id }).where(eq(users.id, who('other lab')));

      const runIds: string[] = [];
      for (const r of DEMO_RUNS) {
        const spec = runSpecSchema.parse(r.spec);
        const [row] = await tx.insert(runs).values({ labId: labIds[r.lab], authorId: who(r.by), title: r.title, spec, storedBytes: 0, storedObjects: 0 }).returning({ id: runs.id });
        runIds.push(row!.id);
        // in the job outbox with the row (api/src/queue/outbox.ts); sent after the commit, or by the API once Redis answers
        await recordJobs(tx, queue, [{ name: JOB_NAMES.computeRun, data: { runId: row!.id, spec } }]);
      }
      // Composed as the compose page starts a figure, but not published: publishing needs a ready print
      // (POST /api/figures/:slug/publish), which the farm makes from the finished run (./demo-finisher.ts).
      const caption = 'Final stable heights after 100 000 grains are dropped at the origin of Z², on an empty background.';
      const [figure] = await tx.insert(figures).values({
        slug: DEMO_FIGURE_SLUG,
        title: 'One hundred thousand grains, square lattice',
        caption,
        runId: runIds[0]!,
        createdById: who('author'),
        spec: specWithCaption(figureSpecSchema.parse(startingComposition(runIds[0]!)), caption),
      }).returning();
      await bookOfflinePurchase(tx, main!.id, 5000, 'demo-purchase-0001', who('manager'));
      // its runs hold their credits as POST /api/runs has them hold them, each against its author, so
      // the credits page, the quotas and the admin console count them like any other run (settled by the farm)
      const mainRuns = await tx.select().from(runs).where(eq(runs.labId, main!.id));
      for (const by of new Set(mainRuns.map((r) => r.authorId))) {
        await reserveForRuns(tx, main!.id, by, mainRuns.filter((r) => r.authorId === by));
      }
      await audit(tx, { actorId: who('author'), labId: main!.id, action: 'figure.create', subjectType: 'figure', subjectId: figure!.id, detail: { slug: figure!.slug } });
      // The other lab is over quota (for the admin console): an admin cut its free allowance for a pilot,
      // it bought a little, and its queued runs hold every credit it has.
      await setAllowance(tx, other!.id, who('admin'), { freeAllowance: 2, reason: 'pilot lab: a small free allowance while the farm is busy' });
      await bookOfflinePurchase(tx, other!.id, 2, 'demo-purchase-0002', who('other lab'));
      await reserveForRuns(tx, other!.id, who('other lab'), await tx.select().from(runs).where(eq(runs.labId, other!.id)));
      await audit(tx, { actorId: null, labId: null, action: 'demo.seed', reason: 'empty database at start' });
      return true;
    });
    if (seeded) await dispatchOutbox({ db: database.db, queue });
    return seeded ? { signIns: [...DEMO_SIGN_INS] } : null;
  } finally {
    await queue.close();
    await database.close();
  }
}

// `tsx api/src/seed/demo.ts` seeds the database named by DATABASE_URL (if it is empty).
if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  seedDemo(loadEnv()).then(
    (result) => {
      if (!result) return console.log('database already has data; nothing seeded');
      for (const s of result.signIns) console.log(`${s.role.padEnd(10)} ${s.email}  ${s.password}`);
    },
    (err: unknown) => {
      console.error(`seeding failed: ${err instanceof Error ? err.message : String(err)}`);
      process.exit(1);
    },
  );
}

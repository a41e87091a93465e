import { createHash } from 'node:crypto';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, figures, figureVersions, runs } from '../../drizzle/schema.js';
import {
  FIGURES_PAGE_SIZE,
  figureResponseSchema,
  figureVersionResponseSchema,
  labFiguresResponseSchema,
  listFiguresResponseSchema,
  type FigureDetail,
} from '../../shared/api/figures.js';
import { JOB_NAMES, QUEUE_NAMES, jobIdFor } from '../../shared/jobs.js';
import { pixelsFor } from '../../shared/print-size.js';
import { runLink } from '../../web/src/pages/citation.js';
import { sendFigureReadyMail } from '../../api/src/services/figures-ready-mail.js';
import { finishedRun, markReady } from './figures-fixtures.js';
import { resolveProblem, runStatsToJSON, stabilize } from '../../renderer/src/engine/index.js';
import { runSpecSchema } from '../../shared/run-spec.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from './support/harness.js';
import { waitForMail } from './support/outbox.js';

let h: Harness;
let author: Session;
let outsider: Session;
let authorEmail: string;
let authorId: string;
let labId: string;
let otherLabRun: string;
let runSquare: string;
let runChecker: string;
let queuedRun: string;

const detail = (body: unknown): FigureDetail => {
  const parsed = figureResponseSchema.parse(body);
  if (parsed.withdrawn) throw new Error('expected the figure, got "withdrawn"');
  return parsed.figure;
};

const spec = (runId: string, extra: Record<string, unknown> = {}) => ({ panels: [{ runId }], size: { kind: 'column', column: 'single' }, dpi: 300, ...extra });

beforeAll(async () => {
  h = await startHarness('figures');
  const a = await createUser(h, 'Figure Author');
  const o = await createUser(h, 'Figure Outsider');
  authorEmail = a.email;
  authorId = a.id;
  labId = await createLab(h, 'Figure Lab', [{ userId: a.id, role: 'author' }]);
  const otherLab = await createLab(h, 'Other Figure Lab', [{ userId: o.id, role: 'manager' }]);
  author = await signIn(h, a.email, TEST_PASSWORD);
  outsider = await signIn(h, o.email, TEST_PASSWORD);
  runSquare = await finishedRun(h, labId, a.id, 'square pile');
  runChecker = await finishedRun(h, labId, a.id, 'checkered pile', 'checkerboard');
  otherLabRun = await finishedRun(h, otherLab, o.id, 'their pile');
  queuedRun = await finishedRun(h, labId, a.id, 'not yet');
  await h.deps.db.update(runs).set({ status: 'computing', stats: null }).where(eq(runs.id, queuedRun));
});
afterAll(async () => {
  await h?.close();
});

describe('composing a figure', () => {
  it('creates a figure from a finished run of the lab, with a slug from its title and the spec defaults filled in', async () => {
    const res = await as(h.http.post('/api/figures'), author).send({ labId, title: `Square pile, n = 16 ${h.tag}`, caption: 'Sixteen grains.', spec: spec(runSquare) });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const f = detail(res.body);
    expect(f.slug).toBe(`square-pile-n-16-${h.tag}`);
    expect(f.labId).toBe(labId);
    expect(f.runId).toBe(runSquare);
    expect(f.publishedAt).toBeNull();
    expect(f.versions).toEqual([]);
    expect(f.canEdit).toBe(true);
    // defaults from shared/print-spec.ts: heights layer, letters for labels, 10 mm margins
    expect(f.spec.panels[0]).toMatchObject({ layer: 'heights', magnification: 'fit' });
    expect(f.spec.margins).toEqual({ top: 10, right: 10, bottom: 10, left: 10 });
    expect(f.runs.find((r) => r.id === runSquare)).toMatchObject({ shape: [7, 7], origin: [3, 3], chips: 16 });

    // the same title again gets a numbered slug; an asked-for slug that is taken is a conflict
    const again = await as(h.http.post('/api/figures'), author).send({ labId, title: `Square pile, n = 16 ${h.tag}`, spec: spec(runSquare) }).expect(201);
    expect(detail(again.body).slug).toBe(`square-pile-n-16-${h.tag}-2`);
    const taken = await as(h.http.post('/api/figures'), author).send({ labId, title: 'x', slug: f.slug, spec: spec(runSquare) });
    expect(taken.status).toBe(409);
    expect(taken.body.error).toMatch(/permanent link is taken/);
  });

  it('refuses runs that are unfinished or of another lab, and bad specs, with a clear message', async () => {
    const unfinished = await as(h.http.post('/api/figures'), author).send({ labId, title: 'unfinished', spec: spec(queuedRun) });
    expect(unfinished.status).toBe(400);
    expect(unfinished.body.error).toMatch(/is computing; figures are composed from finished runs/);
    const foreign = await as(h.http.post('/api/figures'), author).send({ labId, title: 'foreign', spec: spec(otherLabRun) });
    expect(foreign.status).toBe(400);
    expect(foreign.body.error).toMatch(/not a run of this lab/);
    const badDpi = await as(h.http.post('/api/figures'), author).send({ labId, title: 'bad', spec: spec(runSquare, { dpi: 2400 }) });
    expect(badDpi.status).toBe(400);
    expect(badDpi.body.issues.some((i: { path: string }) => i.path === 'spec.dpi')).toBe(true);
    const notMember = await as(h.http.post('/api/figures'), outsider).send({ labId, title: 'theirs', spec: spec(runSquare) });
    expect(notMember.status).toBe(404);
    const anonymous = await h.http.post('/api/figures').send({ labId, title: 'anon', spec: spec(runSquare) });
    expect(anonymous.status).toBe(401);
  });

  it('refuses the difference layer of a run whose background is 0 everywhere, naming the panel, and stores nothing', async () => {
    const title = `No difference ${h.tag}`;
    const two = { ...spec(runSquare), grid: { rows: 1, cols: 2 }, panels: [{ runId: runChecker, layer: 'difference' }, { runId: runSquare, layer: 'difference' }] };
    const res = await as(h.http.post('/api/figures'), author).send({ labId, title, spec: two });
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/spec\.panels\.1\.layer: run "square pile .*" has a background of 0 everywhere, so it has no difference layer/);
    expect(await h.deps.db.select().from(figures).where(eq(figures.title, title))).toEqual([]);
    // the checkerboard 0 / 1 run has one: that panel alone is accepted
    await as(h.http.post('/api/figures'), author).send({ labId, title, spec: { ...two, grid: { rows: 1, cols: 1 }, panels: [two.panels[0]] } }).expect(201);
  });

  it('edits title, caption and composition; strangers cannot see a draft', async () => {
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Two panels ${h.tag}`, spec: spec(runSquare) }).expect(201)).body);
    const two = {
      panels: [{ runId: runSquare, label: 'left' }, { runId: runChecker, layer: 'toppled' }],
      grid: { rows: 1, cols: 2 },
      size: { kind: 'paper', paper: 'A5', orientation: 'landscape' },
      dpi: 150,
    };
    const res = await as(h.http.put(`/api/figures/${f.slug}`), author).send({ caption: 'Side by side.', spec: two }).expect(200);
    const edited = detail(res.body);
    expect(edited.caption).toBe('Side by side.');
    expect(edited.spec.panels.map((p) => p.runId)).toEqual([runSquare, runChecker]);
    expect(edited.slug).toBe(f.slug);
    expect((await as(h.http.put(`/api/figures/${f.slug}`), author).send({})).status).toBe(400);
    expect((await as(h.http.put(`/api/figures/${f.slug}`), outsider).send({ title: 'mine now' })).status).toBe(404);
    expect((await h.http.get(`/api/figures/${f.slug}`)).status).toBe(404);
    expect((await as(h.http.get(`/api/figures/${f.slug}`), outsider)).status).toBe(404);

    const list = labFiguresResponseSchema.parse((await as(h.http.get(`/api/labs/${labId}/figures`), author).expect(200)).body);
    expect(list.figures.map((x) => x.slug)).toContain(f.slug);
    expect((await as(h.http.get(`/api/labs/${labId}/figures`), outsider)).status).toBe(404);
  });
});

describe('one caption, shown and printed', () => {
  const printedCaption = async (slug: string, number: number) => {
    const v = detail((await as(h.http.get(`/api/figures/${slug}`), author).expect(200)).body).versions.find((x) => x.number === number);
    return v?.spec.caption;
  };

  it('prints the caption typed in the form even when the composition carries none, and follows edits of it', async () => {
    // the figure's caption and a composition without one: what a client that only fills "Caption" sends
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Captioned ${h.tag}`, caption: 'Sixteen grains, printed.', spec: spec(runSquare) }).expect(201)).body);
    expect(f.spec.caption).toEqual({ text: 'Sixteen grains, printed.', fontPt: 9 });
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['pdf'] }).expect(202);
    expect(await printedCaption(f.slug, 1)).toEqual({ text: 'Sixteen grains, printed.', fontPt: 9 });

    // a caption-only edit keeps the composition's font size and reaches the next print
    await as(h.http.put(`/api/figures/${f.slug}`), author).send({ spec: spec(runSquare, { caption: { text: 'Sixteen grains, printed.', fontPt: 11 } }) }).expect(200);
    await as(h.http.put(`/api/figures/${f.slug}`), author).send({ caption: 'Edited caption.' }).expect(200);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['pdf'] }).expect(202);
    expect(await printedCaption(f.slug, 2)).toEqual({ text: 'Edited caption.', fontPt: 11 });

    // cleared in the form: nothing is printed under the panels
    const cleared = detail((await as(h.http.put(`/api/figures/${f.slug}`), author).send({ caption: '', spec: spec(runSquare) }).expect(200)).body);
    expect(cleared.caption).toBe('');
    expect(cleared.spec.caption).toBeUndefined();

    // a client that sends the caption only inside the composition gets it shown as well
    const inSpec = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Spec caption ${h.tag}`, spec: spec(runSquare, { caption: { text: 'Only in the spec.' } }) }).expect(201)).body);
    expect(inSpec.caption).toBe('Only in the spec.');
  });

  it('prints the caption of a figure stored before compositions were (the demo figure)', async () => {
    const slug = `stored-caption-${h.tag}`;
    await h.deps.db.insert(figures).values({ slug, title: 'Stored without a composition', caption: 'Final stable heights of sixteen grains.', runId: runSquare, createdById: authorId });
    const f = detail((await as(h.http.get(`/api/figures/${slug}`), author).expect(200)).body);
    expect(f.spec.caption?.text).toBe('Final stable heights of sixteen grains.');
    await as(h.http.post(`/api/figures/${slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    expect((await printedCaption(slug, 1))?.text).toBe('Final stable heights of sixteen grains.');
  });

  it('refuses a caption longer than a page can print, with a message', async () => {
    const res = await as(h.http.post('/api/figures'), author).send({ labId, title: `Long ${h.tag}`, caption: 'x'.repeat(2001), spec: spec(runSquare) });
    expect(res.status).toBe(400);
    expect(res.body.issues.some((i: { path: string }) => i.path === 'caption')).toBe(true);
  });
});

describe('citing a run', () => {
  it('points at a link a reader without an account can open once a figure of the run is published', async () => {
    const run = await finishedRun(h, labId, authorId, 'cited pile');
    const labList = async () => labFiguresResponseSchema.parse((await as(h.http.get(`/api/labs/${labId}/figures`), author).expect(200)).body).figures;
    const origin = 'https://toppleworks.example';
    const path = (url: string) => url.slice(origin.length);

    // unpublished: the only link is the lab's viewer, and the citation says so (its data needs a session)
    const before = runLink(run, await labList(), origin);
    expect(before).toMatchObject({ public: false, url: `${origin}/runs/${run}/view` });
    expect((await h.http.get(`/api/runs/${run}`)).status).toBe(401);

    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Cited ${h.tag}`, spec: spec(run) }).expect(201)).body);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    await markReady(h, f.id, 1);
    await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200);

    const after = runLink(run, await labList(), origin);
    expect(after).toMatchObject({ public: true, url: `${origin}/f/${f.slug}` });
    // what the reader page at that address loads answers without a session, and is this run
    const slug = path(after.url).replace(/^\/f\//, '');
    const reader = detail((await h.http.get(`/api/figures/${slug}`).expect(200)).body);
    expect(reader.runId).toBe(run);
  });
});

describe('ordering, publishing and withdrawing', () => {
  let slug: string;
  let figureId: string;

  it('orders a print as a numbered version and enqueues one figure.print job for it', async () => {
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Ordered ${h.tag}`, caption: 'For print.', spec: spec(runSquare) }).expect(201)).body);
    slug = f.slug;
    figureId = f.id;
    const res = await as(h.http.post(`/api/figures/${slug}/versions`), author).send({ formats: ['png', 'pdf'] });
    expect(res.status, JSON.stringify(res.body)).toBe(202);
    const { version } = figureVersionResponseSchema.parse(res.body);
    expect(version).toMatchObject({ number: 1, status: 'queued', formats: ['png', 'pdf'], files: [] });

    const [row] = await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, figureId));
    const connection = new Redis(h.env.REDIS_URL, { maxRetriesPerRequest: null });
    const queue = new Queue(QUEUE_NAMES.print, { connection, prefix: h.queuePrefix });
    try {
      const job = await queue.getJob(jobIdFor({ name: JOB_NAMES.printFigure, data: { versionId: row!.id } }));
      expect(job?.name).toBe('figure.print');
      expect(job?.data).toEqual({ versionId: row!.id });
    } finally {
      await queue.close();
      await connection.quit();
    }
    const second = figureVersionResponseSchema.parse((await as(h.http.post(`/api/figures/${slug}/versions`), author).send({}).expect(202)).body);
    expect(second.version.number).toBe(2);
    expect(second.version.formats).toEqual(['png', 'tiff', 'pdf']);
  });

  it('refuses an order the print engine could not make, quoting its reason', async () => {
    // 7 cells at 200 px per cell = 1400 px, wider than a 90 mm column at 150 DPI (pixels = round(in × DPI), the arithmetic of journal artwork guidelines)
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Too big ${h.tag}`, spec: { ...spec(runSquare), dpi: 150, panels: [{ runId: runSquare, magnification: 200 }] } }).expect(201)).body);
    expect(pixelsFor(90, 150)).toBe(531);
    const res = await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({});
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/cannot be met at this resolution/);
    expect(await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, f.id))).toEqual([]);
  });

  it('refuses a page with more pixels than a print may have, with its size, the limit and the largest DPI, and stores and orders nothing', async () => {
    // A0 (ISO 216, 841 × 1189 mm) at 1200 DPI: round(841 / 25.4 × 1200) × round(1189 / 25.4 × 1200) px;
    // 803 DPI is the most whose page stays within 10^9 px (tests/print/layout.test.ts has the arithmetic)
    const a0 = { ...spec(runSquare), size: { kind: 'paper', paper: 'A0' }, dpi: 1200 };
    const title = `Poster ${h.tag}`;
    const res = await as(h.http.post('/api/figures'), author).send({ labId, title, spec: a0 });
    expect(res.status).toBe(400);
    expect(res.body.issues).toEqual([{ path: 'spec.dpi', message: expect.stringContaining('39,732 × 56,173 px (2.23 gigapixels)') }]);
    expect(res.body.error).toContain('more than the 1,000,000,000 px (1 gigapixel) a print may have; at most 803 DPI fits A0 portrait');
    expect(await h.deps.db.select().from(figures).where(eq(figures.title, title))).toEqual([]);

    // an edit to the same size is refused too, and the stored composition stays as it was
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title, spec: { ...a0, dpi: 600 } }).expect(201)).body);
    const edit = await as(h.http.put(`/api/figures/${f.slug}`), author).send({ spec: a0 });
    expect(edit.status).toBe(400);
    expect(edit.body.error).toContain('at most 803 DPI fits A0 portrait');
    expect(detail((await as(h.http.get(`/api/figures/${f.slug}`), author).expect(200)).body).spec.dpi).toBe(600);

    // a composition saved before the limit existed still opens, and ordering it is refused with the same numbers
    const [stored] = await h.deps.db.select({ spec: figures.spec }).from(figures).where(eq(figures.id, f.id));
    await h.deps.db.update(figures).set({ spec: { ...stored!.spec!, dpi: 1200 } }).where(eq(figures.id, f.id));
    expect(detail((await as(h.http.get(`/api/figures/${f.slug}`), author).expect(200)).body).spec.dpi).toBe(1200);
    const order = await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({});
    expect(order.status).toBe(400);
    expect(order.body.error).toMatch(/^this figure cannot be printed as composed: the page is too large to print: at 1200 DPI A0 portrait would be 39,732 × 56,173 px/);
    expect(await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, f.id))).toEqual([]);
    expect(await h.deps.db.select().from(auditEvents).where(and(eq(auditEvents.subjectId, f.id), eq(auditEvents.action, 'figure.order')))).toEqual([]);
  });

  it('publishes only with a ready version; readers then see it, its ready versions and its files', async () => {
    const early = await as(h.http.post(`/api/figures/${slug}/publish`), author);
    expect(early.status).toBe(409);
    expect(early.body.error).toMatch(/wait until it is ready/);
    const file = await markReady(h, figureId, 1);
    const pub = detail((await as(h.http.post(`/api/figures/${slug}/publish`), author).expect(200)).body);
    expect(pub.publishedAt).not.toBeNull();
    expect(pub.latestVersion).toBe(1);
    expect((await as(h.http.post(`/api/figures/${slug}/publish`), author)).status).toBe(409);

    const reader = detail((await h.http.get(`/api/figures/${slug}`).expect(200)).body);
    expect(reader.canEdit).toBe(false);
    // version 2 is still queued: readers see only ready versions
    expect(reader.versions.map((v) => v.number)).toEqual([1]);
    expect(reader.versions[0]!.files[0]).toMatchObject({ format: 'png', bytes: file.bytes, sha256: file.sha256, name: file.name });
    const lab = detail((await as(h.http.get(`/api/figures/${slug}`), author).expect(200)).body);
    expect(lab.versions.map((v) => [v.number, v.status])).toEqual([[2, 'queued'], [1, 'ready']]);

    // a download is a redirect to a presigned, expiring address of the object store
    const dl = await h.http.get(reader.versions[0]!.files[0]!.href).expect(302);
    const location = new URL(dl.headers.location!);
    expect(location.origin).toBe(new URL(h.env.S3_ENDPOINT).origin);
    expect(location.searchParams.get('X-Amz-Expires')).toBe('3600');
    const bytes = Buffer.from(await (await fetch(location)).arrayBuffer());
    expect(createHash('sha256').update(bytes).digest('hex')).toBe(file.sha256);
    expect((await h.http.get(`/api/figures/${slug}/versions/2/files/png`)).status).toBe(404);
    expect((await h.http.get(`/api/figures/${slug}/versions/1/files/tiff`)).status).toBe(404);
    expect((await as(h.http.post(`/api/figures/${slug}/unpublish`), outsider)).status).toBe(403);
  });

  it('lists published figures publicly, filtered by lattice, background and n on the server', async () => {
    const mine = (q: string) =>
      h.http
        .get(`/api/figures${q}`)
        .expect(200)
        .then((r) => listFiguresResponseSchema.parse(r.body).figures.filter((f) => f.slug === slug));
    expect(await mine('')).toHaveLength(1);
    // the entry names the background with its value, not only its kind
    expect((await mine(''))[0]!.backgroundSpec).toEqual({ kind: 'constant', height: 0 });
    expect(await mine('?lattice=square&background=constant&nMin=16&nMax=16')).toHaveLength(1);
    expect(await mine('?lattice=triangular')).toHaveLength(0);
    expect(await mine('?background=checkerboard')).toHaveLength(0);
    expect(await mine('?nMin=17')).toHaveLength(0);
    expect(await mine('?nMax=15')).toHaveLength(0);
    const bad = await h.http.get('/api/figures?nMin=10&nMax=5');
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/nMin must not exceed nMax/);
  });

  it('finds a multi-panel figure in the index by any of its panels\' runs', async () => {
    // two backgrounds side by side: the first panel's run is on the constant background, the second on the checkerboard
    const f = detail(
      (await as(h.http.post('/api/figures'), author).send({ labId, title: `Side by side ${h.tag}`, spec: { ...spec(runSquare), grid: { rows: 1, cols: 2 }, panels: [{ runId: runSquare }, { runId: runChecker }] } }).expect(201)).body,
    );
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({}).expect(202);
    await markReady(h, f.id, 1);
    await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200);
    const found = (q: string) =>
      h.http
        .get(`/api/figures${q}`)
        .expect(200)
        .then((r) => listFiguresResponseSchema.parse(r.body).figures.some((x) => x.slug === f.slug));
    expect(await found('?background=checkerboard')).toBe(true);
    expect(await found('?background=constant')).toBe(true);
    expect(await found('?lattice=square&background=checkerboard&nMin=16&nMax=16')).toBe(true);
    expect(await found('?background=checkerboard&nMin=17')).toBe(false);
    expect(await found('?background=random')).toBe(false);
    // the page of a figure whose first panel is on the checkerboard gives both of its heights to readers
    const checkered = detail(
      (await as(h.http.post('/api/figures'), author).send({ labId, title: `Checkered ${h.tag}`, spec: spec(runChecker) }).expect(201)).body,
    );
    await as(h.http.post(`/api/figures/${checkered.slug}/versions`), author).send({}).expect(202);
    await markReady(h, checkered.id, 1);
    await as(h.http.post(`/api/figures/${checkered.slug}/publish`), author).expect(200);
    const read = detail((await h.http.get(`/api/figures/${checkered.slug}`).expect(200)).body);
    expect([read.background, read.backgroundSpec]).toEqual(['checkerboard', { kind: 'checkerboard', a: 0, b: 1 }]);
    await as(h.http.post(`/api/figures/${checkered.slug}/unpublish`), author).expect(200);
    const list = listFiguresResponseSchema.parse((await h.http.get('/api/figures?background=checkerboard').expect(200)).body);
    // the count follows the same filter as the page (other test files may publish figures too)
    if (list.figures.length < FIGURES_PAGE_SIZE) expect(list.total).toBe(list.figures.length);
    expect(list.figures.some((x) => x.slug === f.slug)).toBe(true);
    await as(h.http.post(`/api/figures/${f.slug}/unpublish`), author).expect(200);
  });

  it('mails whoever ordered a ready version a presigned link, once', async () => {
    const [v1] = await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, figureId)).orderBy(figureVersions.number);
    const deps = { db: h.deps.db, mailer: h.deps.mailer, blobs: h.deps.blobs, env: h.env };
    expect(await sendFigureReadyMail(deps, v1!.id)).toBe('sent');
    expect(await sendFigureReadyMail(deps, v1!.id)).toBe('already-sent');
    const mail = await waitForMail(h.env, authorEmail, /Print ready/);
    expect(mail.subject).toContain('version 1');
    const link = /(http:\/\/\S+X-Amz-Signature=\S+)/.exec(mail.text)?.[1];
    expect(link).toBeDefined();
    expect((await fetch(link!)).status).toBe(200);
    expect(mail.text).toContain(v1!.files[0]!.sha256);
  });

  it('unpublishing keeps the link answering "withdrawn"; the lab still sees everything', async () => {
    await as(h.http.post(`/api/figures/${slug}/unpublish`), author).expect(200);
    const reader = figureResponseSchema.parse((await h.http.get(`/api/figures/${slug}`).expect(200)).body);
    expect(reader).toMatchObject({ withdrawn: true, slug, title: `Ordered ${h.tag}` });
    expect(reader.withdrawn && Date.parse(reader.withdrawnAt)).toBeGreaterThan(0);
    const stranger = figureResponseSchema.parse((await as(h.http.get(`/api/figures/${slug}`), outsider).expect(200)).body);
    expect(stranger.withdrawn).toBe(true);
    const lab = detail((await as(h.http.get(`/api/figures/${slug}`), author).expect(200)).body);
    expect(lab.withdrawnAt).not.toBeNull();
    const listed = listFiguresResponseSchema.parse((await h.http.get('/api/figures').expect(200)).body).figures;
    expect(listed.map((f) => f.slug)).not.toContain(slug);
    expect((await h.http.get(`/api/figures/${slug}/versions/1/files/png`)).status).toBe(404);
    expect((await as(h.http.post(`/api/figures/${slug}/unpublish`), author)).status).toBe(409);

    // publishing again restores it, keeping the first publication date
    const again = detail((await as(h.http.post(`/api/figures/${slug}/publish`), author).expect(200)).body);
    expect(again.withdrawnAt).toBeNull();
    expect(detail((await h.http.get(`/api/figures/${slug}`).expect(200)).body).slug).toBe(slug);
  });

  it('a new ready print reaches readers only once it is published, with the history kept', async () => {
    await markReady(h, figureId, 2);
    const before = detail((await h.http.get(`/api/figures/${slug}`).expect(200)).body);
    expect([before.publishedVersion, before.versions.map((v) => v.number)]).toEqual([1, [1]]);
    expect((await h.http.get(`/api/figures/${slug}/versions/2/files/png`)).status).toBe(404);
    await as(h.http.post(`/api/figures/${slug}/publish`), author).expect(200);
    const reader = detail((await h.http.get(`/api/figures/${slug}`).expect(200)).body);
    expect(reader.latestVersion).toBe(2);
    expect(reader.publishedVersion).toBe(2);
    expect(reader.versions.map((v) => v.number)).toEqual([2, 1]);
  });
});

describe('a published figure does not change under its readers', () => {
  const readerView = async (slug: string, session?: Session) => detail((await (session ? as(h.http.get(`/api/figures/${slug}`), session) : h.http.get(`/api/figures/${slug}`)).expect(200)).body);

  it('keeps edits as the lab\'s draft until they are printed and published as a new version', async () => {
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Frozen ${h.tag}`, caption: 'As printed first.', spec: spec(runSquare) }).expect(201)).body);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    const v1 = await markReady(h, f.id, 1);
    const first = detail((await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200)).body);
    expect([first.publishedVersion, first.unpublishedChanges, first.draftVersion]).toEqual([1, false, 1]);

    // the lab edits title, caption and composition after publishing
    await as(h.http.put(`/api/figures/${f.slug}`), author).send({ title: `Frozen, edited ${h.tag}`, caption: 'Edited later.', spec: spec(runSquare, { dpi: 150 }) }).expect(200);

    // readers, signed out or of another lab, still get exactly what was published
    for (const reader of [await readerView(f.slug), await readerView(f.slug, outsider)]) {
      expect(reader.canEdit).toBe(false);
      expect([reader.title, reader.caption, reader.spec.dpi, reader.spec.caption?.text]).toEqual([`Frozen ${h.tag}`, 'As printed first.', 300, 'As printed first.']);
      expect(reader.versions.map((v) => [v.number, v.title, v.caption])).toEqual([[1, `Frozen ${h.tag}`, 'As printed first.']]);
      expect(reader.versions[0]!.files[0]!.sha256).toBe(v1.sha256);
      expect(reader.unpublishedChanges).toBe(false);
    }
    const indexed = listFiguresResponseSchema.parse((await h.http.get('/api/figures').expect(200)).body).figures.find((x) => x.slug === f.slug);
    expect([indexed?.title, indexed?.caption]).toEqual([`Frozen ${h.tag}`, 'As printed first.']);

    // the lab sees its draft, marked as not yet published and not yet printed
    const lab = await readerView(f.slug, author);
    expect([lab.title, lab.caption, lab.spec.dpi]).toEqual([`Frozen, edited ${h.tag}`, 'Edited later.', 150]);
    expect([lab.publishedVersion, lab.unpublishedChanges, lab.draftVersion]).toEqual([1, true, null]);
    expect((await as(h.http.post(`/api/figures/${f.slug}/publish`), author)).body.error).toMatch(/version 1 is already published; to publish changes, print again/);

    // printed: the new version carries the edited words, and readers still do not see it
    const ordered = figureVersionResponseSchema.parse((await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202)).body).version;
    expect([ordered.number, ordered.title, ordered.caption, ordered.publishedAt]).toEqual([2, `Frozen, edited ${h.tag}`, 'Edited later.', null]);
    expect((await readerView(f.slug, author)).draftVersion).toBe(2);
    await markReady(h, f.id, 2);
    expect((await readerView(f.slug)).versions.map((v) => v.number)).toEqual([1]);
    expect((await h.http.get(`/api/figures/${f.slug}/versions/2/files/png`)).status).toBe(404);
    expect((await as(h.http.get(`/api/figures/${f.slug}/versions/2/files/png`), author)).status).toBe(302);

    // published again: readers get version 2, version 1 stays downloadable, the first publication date stays
    const again = detail((await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200)).body);
    expect([again.publishedVersion, again.unpublishedChanges, again.publishedAt]).toEqual([2, false, first.publishedAt]);
    const reader = await readerView(f.slug);
    expect([reader.title, reader.caption, reader.spec.dpi]).toEqual([`Frozen, edited ${h.tag}`, 'Edited later.', 150]);
    expect(reader.versions.map((v) => [v.number, v.title, Boolean(v.publishedAt)])).toEqual([
      [2, `Frozen, edited ${h.tag}`, true],
      [1, `Frozen ${h.tag}`, true],
    ]);
    expect((await h.http.get(`/api/figures/${f.slug}/versions/1/files/png`)).status).toBe(302);

    // a withdrawn figure's link names the title readers knew, not a later draft's
    await as(h.http.put(`/api/figures/${f.slug}`), author).send({ title: `Draft title ${h.tag}` }).expect(200);
    await as(h.http.post(`/api/figures/${f.slug}/unpublish`), author).expect(200);
    expect(figureResponseSchema.parse((await h.http.get(`/api/figures/${f.slug}`).expect(200)).body)).toMatchObject({ withdrawn: true, title: `Frozen, edited ${h.tag}` });
  });

  it('keeps the first panel\'s run of a figure that was ever published, and leaves the figure as it was', async () => {
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Lead run ${h.tag}`, spec: spec(runSquare) }).expect(201)).body);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    await markReady(h, f.id, 1);
    await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200);
    await as(h.http.post(`/api/figures/${f.slug}/unpublish`), author).expect(200);
    const res = await as(h.http.put(`/api/figures/${f.slug}`), author).send({ title: 'other run', spec: spec(runChecker) });
    expect(res.status).toBe(409);
    expect(res.body.error).toMatch(/keeps its first panel's run/);
    const lab = await readerView(f.slug, author);
    expect([lab.title, lab.runId]).toEqual([`Lead run ${h.tag}`, runSquare]);
  });

  it('hands another lab\'s member the published figure only, never the editable draft', async () => {
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Not theirs ${h.tag}`, caption: 'Published words.', spec: spec(runSquare) }).expect(201)).body);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    await markReady(h, f.id, 1);
    await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200);
    await as(h.http.put(`/api/figures/${f.slug}`), author).send({ caption: 'Private draft words.' }).expect(200);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    const seen = await readerView(f.slug, outsider);
    expect([seen.canEdit, seen.caption, seen.draftVersion, seen.versions.map((v) => v.number)]).toEqual([false, 'Published words.', null, [1]]);
    expect(JSON.stringify(seen)).not.toContain('Private draft words.');
    const save = await as(h.http.put(`/api/figures/${f.slug}`), outsider).send({ caption: 'mine now' });
    expect(save.status).toBe(403);
    expect(save.body.error).toMatch(/only members of the figure's lab/);
  });
});

describe('the certificate of each panel\'s run', () => {
  it('reaches readers of the published figure as the engine stored it, and null for runs from before certificates', async () => {
    // the real engine's statistics for a small pile, stored as the worker stores them (compute-run.ts)
    const spec16 = runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 16 });
    const stats = runStatsToJSON((await stabilize(resolveProblem(spec16), { threads: 1 })).stats);
    expect(stats.certificate?.passed).toBe(true);
    const [certified] = await h.deps.db.insert(runs).values({ labId, authorId, title: `certified ${h.tag}`, spec: spec16, status: 'finished', stats, finishedAt: new Date() }).returning();
    const f = detail(
      (await as(h.http.post('/api/figures'), author).send({ labId, title: `Certified panels ${h.tag}`, spec: { ...spec(certified!.id), grid: { rows: 1, cols: 2 }, panels: [{ runId: certified!.id }, { runId: runSquare }] } }).expect(201)).body,
    );
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
    await markReady(h, f.id, 1);
    await as(h.http.post(`/api/figures/${f.slug}/publish`), author).expect(200);
    // signed out: the public answer, parsed with the shared schema the reader page uses
    const seen = detail((await h.http.get(`/api/figures/${f.slug}`).expect(200)).body);
    expect(seen.runs.find((r) => r.id === certified!.id)?.certificate).toEqual(stats.certificate);
    // the fixture's statistics predate certificates (figures-fixtures.ts): the contract says so with null
    expect(seen.runs.find((r) => r.id === runSquare)?.certificate).toBeNull();
  });
});

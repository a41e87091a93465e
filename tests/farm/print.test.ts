import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import sharp from 'sharp';
import { eq } from 'drizzle-orm';
import { figureVersions } from '../../drizzle/schema.js';
import { figureResponseSchema, type FigureDetail, type FigureVersion } from '../../shared/api/figures.js';
import { runResponseSchema, type Run } from '../../shared/api/runs.js';
import { pixelsFor } from '../../shared/print-size.js';
import { figureSpecSchema } from '../../shared/print-spec.js';
import { layoutFigure } from '../../shared/print-layout.js';
import { readNpy } from '../../renderer/src/npy/index.js';
import { arrayKeys } from '../../renderer/src/farm/artifacts.js';
import { startFarmWorker } from '../../renderer/src/farm/farm-worker.js';
import { wrapText } from '../../renderer/src/print/index.js';
import { as, createLab, createUser, signIn, startHarness, TEST_PASSWORD, type Harness, type Session } from '../api/support/harness.js';
import { waitForMail } from '../api/support/outbox.js';

let h: Harness;
let author: Session;
let authorEmail: string;
let labId: string;
let farm: Awaited<ReturnType<typeof startFarmWorker>>;
let run: Run;

const detail = (body: unknown): FigureDetail => {
  const parsed = figureResponseSchema.parse(body);
  if (parsed.withdrawn) throw new Error('figure withdrawn');
  return parsed.figure;
};

async function until<T>(what: string, probe: () => Promise<T | null>, timeoutMs = 90_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v !== null) return v;
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

beforeAll(async () => {
  h = await startHarness('print-farm');
  const a = await createUser(h, 'Print Author');
  authorEmail = a.email;
  labId = await createLab(h, 'Print Lab', [{ userId: a.id, role: 'author' }]);
  author = await signIn(h, a.email, TEST_PASSWORD);
  farm = await startFarmWorker(h.env, { prefix: h.queuePrefix, threads: 1 });
  const res = await as(h.http.post('/api/runs'), author).send({ labId, title: 'A thousand grains to print', spec: { lattice: { preset: 'square' }, chips: 1000 } });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const id = runResponseSchema.parse(res.body).run.id;
  run = await until('the run to finish', async () => {
    const r = runResponseSchema.parse((await as(h.http.get(`/api/runs/${id}`), author).expect(200)).body).run;
    if (r.status === 'failed' || r.status === 'cancelled') throw new Error(`run ${r.status}: ${r.error}`);
    return r.status === 'finished' ? r : null;
  });
}, 120_000);
afterAll(async () => {
  await farm?.close();
  await h?.close();
});

async function printed(slug: string, number: number): Promise<FigureVersion> {
  return until(`version ${number} of ${slug}`, async () => {
    const v = detail((await as(h.http.get(`/api/figures/${slug}`), author).expect(200)).body).versions.find((x) => x.number === number);
    if (v?.status === 'failed') throw new Error(`print failed: ${v.error}`);
    return v?.status === 'ready' ? v : null;
  });
}

describe('the figure.print job', () => {
  it('prints a figure of a real n = 1000 run: files stored, PNG of size × DPI, cells exactly the run\'s heights, mail sent', { timeout: 120_000 }, async () => {
    const spec = {
      panels: [{ runId: run.id, layer: 'heights', magnification: 2 }],
      size: { kind: 'column', column: 'single', heightMm: 80 },
      dpi: 300,
      scaleBar: { unit: 'lattice' },
      caption: { text: 'Final heights of 1000 grains on Z².' },
    };
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Thousand grains ${h.tag}`, spec }).expect(201)).body);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png', 'tiff', 'pdf'] }).expect(202);
    const v = await printed(f.slug, 1);

    // every ordered file is in the store, with the size and checksum listed on the figure's page
    expect(v.files.map((x) => x.format).sort()).toEqual(['pdf', 'png', 'tiff']);
    const [row] = await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, f.id));
    for (const file of row!.files) {
      const bytes = await h.deps.blobs.get(file.key);
      expect(bytes?.length, file.key).toBe(file.bytes);
    }

    // pixels = round(size in inches × DPI): 90 mm at 300 DPI = 1063 px, 80 mm = 945 px (journal artwork guidelines)
    const png = (await h.deps.blobs.get(row!.files.find((x) => x.format === 'png')!.key))!;
    const meta = await sharp(png).metadata();
    expect([meta.width, meta.height]).toEqual([pixelsFor(90, 300), pixelsFor(80, 300)]);
    expect(pixelsFor(90, 300)).toBe(1063);
    // the resolution is recorded in the file (sharp reads the PNG pHYs chunk back as DPI)
    expect(Math.round(meta.density ?? 0)).toBe(300);

    // at magnification 2 every cell is a 2 × 2 block of one colour, and colours stand one-to-one for heights
    const heights = readNpy(new Uint8Array((await h.deps.blobs.get(arrayKeys(run.id).heights))!));
    const [H, W] = heights.shape as [number, number];
    const layout = layoutFigure(figureSpecSchema.parse(spec), [{ runId: run.id, shape: run.stats!.shape, origin: run.stats!.origin, chips: 1000 }]);
    const panel = layout.panels[0]!;
    expect(panel.cellPx).toBe(2);
    const { data, info } = await sharp(png).removeAlpha().raw().toBuffer({ resolveWithObject: true });
    const colourOf = new Map<number, string>();
    const heightOf = new Map<string, number>();
    let mismatches = 0;
    for (let y = 0; y < H; y++) {
      for (let x = 0; x < W; x++) {
        const hgt = Number(heights.data[y * W + x]);
        const block: string[] = [];
        for (const [dy, dx] of [[0, 0], [0, 1], [1, 0], [1, 1]]) {
          const o = ((panel.image.y + y * 2 + dy!) * info.width + panel.image.x + x * 2 + dx!) * info.channels;
          block.push(`${data[o]},${data[o + 1]},${data[o + 2]}`);
        }
        const c = block[0]!;
        if (block.some((b) => b !== c)) mismatches++;
        if ((colourOf.get(hgt) ?? c) !== c || (heightOf.get(c) ?? hgt) !== hgt) mismatches++;
        colourOf.set(hgt, c);
        heightOf.set(c, hgt);
      }
    }
    expect(mismatches).toBe(0);
    // stable heights on Z^2 are 0..3 (common practice: the threshold rule), and all four occur
    expect([...colourOf.keys()].sort()).toEqual([0, 1, 2, 3]);

    // the PDF's page box is the ordered size (1 pt = 1/72 in, ISO 32000-1), its text is real text
    const pdfjs = await import('pdfjs-dist/legacy/build/pdf.mjs');
    const pdf = (await h.deps.blobs.get(row!.files.find((x) => x.format === 'pdf')!.key))!;
    const doc = await pdfjs.getDocument({ data: new Uint8Array(pdf), disableFontFace: true, verbosity: 0 }).promise;
    const page = await doc.getPage(1);
    expect(Math.abs((page.view[2]! * 25.4) / 72 - 90)).toBeLessThan(0.1);
    expect(Math.abs((page.view[3]! * 25.4) / 72 - 80)).toBeLessThan(0.1);
    const text = (await page.getTextContent()).items.map((i) => ('str' in i ? i.str : '')).join(' ');
    expect(text).toContain('1000 grains');

    const mail = await waitForMail(h.env, authorEmail, /Print ready/, 10_000);
    expect(mail.text).toContain(v.files[0]!.sha256);
    const link = /(http:\/\/\S+X-Amz-Signature=\S+)/.exec(mail.text)![1]!;
    expect((await fetch(link)).status).toBe(200);
  });

  it('prints a two-panel figure with one shared lattice scale, labels and caption as PDF text', { timeout: 60_000 }, async () => {
    const spec = {
      panels: [{ runId: run.id, layer: 'heights' }, { runId: run.id, layer: 'toppled', palette: 'newsprint' }],
      grid: { rows: 1, cols: 2, sharedScale: 'lattice' },
      size: { kind: 'paper', paper: 'A5', orientation: 'landscape' },
      dpi: 150,
      caption: { text: 'Heights beside the toppled sites.' },
    };
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Side by side ${h.tag}`, spec }).expect(201)).body);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png', 'pdf'] }).expect(202);
    const v = await printed(f.slug, 1);
    // A5 landscape = 210 × 148 mm (ISO 216) at 150 DPI: round(210 / 25.4 × 150) = 1240, round(148 / 25.4 × 150) = 874
    expect([v.files[0]!.widthPx, v.files[0]!.heightPx]).toEqual([pixelsFor(210, 150), pixelsFor(148, 150)]);
    expect([pixelsFor(210, 150), pixelsFor(148, 150)]).toEqual([1240, 874]);
    const layout = layoutFigure(figureSpecSchema.parse(spec), [{ runId: run.id, shape: run.stats!.shape, origin: run.stats!.origin, chips: 1000 }]);
    expect(layout.panels[0]!.pixelsPerCell).toBe(layout.panels[1]!.pixelsPerCell);
    const [row] = await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, f.id));
    const pdf = (await h.deps.blobs.get(row!.files.find((x) => x.format === 'pdf')!.key))!;
    const pdfjs = await import('pdfjs-dist/legacy/build/pdf.mjs');
    const page = await (await pdfjs.getDocument({ data: new Uint8Array(pdf), disableFontFace: true, verbosity: 0 }).promise).getPage(1);
    const text = (await page.getTextContent()).items.map((i) => ('str' in i ? i.str : '')).join(' ');
    expect(text).toContain('(a)');
    expect(text).toContain('(b)');
    expect(text).toContain('Heights beside the toppled sites.');
  });

  it('prints the caption typed in the compose form under the panels, wrapped, in PNG, TIFF and PDF', { timeout: 90_000 }, async () => {
    // the form's Caption field (the figure's caption) with a composition that carries none of its own
    const caption = 'Final stable heights after 1000 grains are added at the origin of the square lattice, on an empty background; the caption is long enough to wrap over several lines.';
    const spec = { panels: [{ runId: run.id }], size: { kind: 'column', column: 'single' }, dpi: 300 };
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Captioned ${h.tag}`, caption, spec }).expect(201)).body);
    await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png', 'tiff', 'pdf'] }).expect(202);
    const v = await printed(f.slug, 1);
    const layout = layoutFigure(figureSpecSchema.parse(v.spec), [{ runId: run.id, shape: run.stats!.shape, origin: run.stats!.origin, chips: 1000 }]);
    const box = layout.caption!;
    expect(box.text).toBe(caption);
    const [row] = await h.deps.db.select().from(figureVersions).where(eq(figureVersions.figureId, f.id));
    const file = (format: string) => h.deps.blobs.get(row!.files.find((x) => x.format === format)!.key).then((b) => b!);

    // ink (dark grey anti-aliased text) on every reserved caption line of both raster formats
    const linePx = Math.ceil(((box.fontPt * 1.25) / 72) * layout.dpi);
    const lines = wrapText(caption, 'regular', box.fontPt, (box.width * 72) / layout.dpi).length;
    expect(lines).toBeGreaterThan(1);
    expect(lines * linePx).toBeLessThanOrEqual(box.height);
    for (const format of ['png', 'tiff']) {
      const { data, info } = await sharp(await file(format)).removeAlpha().raw().toBuffer({ resolveWithObject: true });
      for (let l = 0; l < lines; l++) {
        let ink = 0;
        for (let y = box.y + l * linePx; y < box.y + (l + 1) * linePx; y++)
          for (let x = box.x; x < box.x + box.width; x++) {
            const o = (y * info.width + x) * info.channels;
            if (data[o]! < 128 && data[o] === data[o + 1] && data[o] === data[o + 2]) ink++;
          }
        expect(ink, `${format}, caption line ${l + 1}`).toBeGreaterThan(50);
      }
    }

    // the PDF carries the caption as text, every word of it
    const pdfjs = await import('pdfjs-dist/legacy/build/pdf.mjs');
    const page = await (await pdfjs.getDocument({ data: new Uint8Array(await file('pdf')), disableFontFace: true, verbosity: 0 }).promise).getPage(1);
    const text = (await page.getTextContent()).items.map((i) => ('str' in i ? i.str : '')).join(' ');
    expect(text.replace(/\s+/g, ' ')).toContain(caption.replace(/\s+/g, ' '));
  });

  it('records why an order failed, and stores no file', { timeout: 60_000 }, async () => {
    // an order accepted by the API whose run's stored arrays are incomplete by the time it is printed
    const f = detail((await as(h.http.post('/api/figures'), author).send({ labId, title: `Vanishing ${h.tag}`, spec: { panels: [{ runId: run.id }], size: { kind: 'column', column: 'single' }, dpi: 150 } }).expect(201)).body);
    const saved = (await h.deps.blobs.get(arrayKeys(run.id).sidecar))!;
    await h.deps.blobs.delete(arrayKeys(run.id).sidecar);
    try {
      await as(h.http.post(`/api/figures/${f.slug}/versions`), author).send({ formats: ['png'] }).expect(202);
      const v = await until('the failure', async () => {
        const x = detail((await as(h.http.get(`/api/figures/${f.slug}`), author).expect(200)).body).versions[0];
        return x?.status === 'failed' ? x : null;
      });
      expect(v.error).toMatch(/arrays of run .* are not in the store/);
      expect(v.files).toEqual([]);
      expect(await h.deps.blobs.list(`figures/${f.id}/`)).toEqual([]);
    } finally {
      await h.deps.blobs.put(arrayKeys(run.id).sidecar, saved, 'application/json');
    }
  });
});

/**
 * `npm run bench:print`: wall time and peak memory of print orders (renderer/src/print), as a table,
 * with ratios against a baseline measured in the same run, never as timed tests.
 *
 *   --only a4|a0|a0-600   run one order only (default a4 and a0; a0-600 is the issue's largest
 *                         example, 19866 × 28087 px, 4 px per cell, on request only)
 *   --no-baseline    skip the full-page-buffer baselines
 *
 * Orders: A4 at 600 DPI (4961 × 7016 px) and A0 at 300 DPI (9933 × 14043 px), one panel each, 10 mm
 * margins, scale bar, legend and caption, palette tidewater. Input: synthetic i.i.d. heights 0..3
 * from a seeded generator, every cell toppled: close to the worst case for compression (real piles
 * have large periodic patches). A4 uses 4,400² cells at 1 px per cell (the panel nearly fills the
 * page width), A0 4,800² cells at 2 px per cell.
 *
 * Every case runs in its own child process, so peak RSS (getrusage maxRSS) belongs to one case. The
 * input arrays (13 bytes per cell) are part of every child's RSS; "over input" subtracts the RSS
 * measured right after they were built. Baseline: the approach the issue rules out, the whole page
 * as one uncompressed RGB buffer handed to sharp (PNG with density, and LZW TIFF), same pixels.
 */
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import sharp from 'sharp';
import { pagePalette, pageStrips, prepareFigure, renderPrint, type PrintFormat } from '../../renderer/src/print/index.js';
import type { RenderInput } from '../../renderer/src/render/index.js';
import type { FigureSpecInput } from '../../shared/print-spec.js';
import { runInChild } from './child-case.js';

type Order = 'a4' | 'a0' | 'a0-600';
interface CaseSpec {
  order: Order;
  kind: 'stream' | 'baseline';
  format: PrintFormat;
  dir: string;
}
interface CaseResult extends CaseSpec {
  seconds: number;
  widthPx: number;
  heightPx: number;
  cells: number;
  bytes: number;
  maxRssBytes: number;
  inputRssBytes: number;
}

const ORDERS: Record<Order, { side: number; spec: FigureSpecInput; label: string }> = {
  a4: { side: 4400, label: 'A4 600 DPI', spec: { size: { kind: 'paper', paper: 'A4' }, dpi: 600, panels: [{ runId: 'bench' }] } },
  a0: { side: 4800, label: 'A0 300 DPI', spec: { size: { kind: 'paper', paper: 'A0' }, dpi: 300, panels: [{ runId: 'bench' }] } },
  'a0-600': { side: 4800, label: 'A0 600 DPI', spec: { size: { kind: 'paper', paper: 'A0' }, dpi: 600, panels: [{ runId: 'bench' }] } },
};

function orderSpec(order: Order): FigureSpecInput {
  return {
    ...ORDERS[order].spec,
    scaleBar: { unit: 'lattice' },
    caption: { text: 'Synthetic i.i.d. heights 0 to 3 on a square array, every cell toppled: a print benchmark.' },
  };
}

function syntheticInput(side: number): RenderInput {
  const n = side * side;
  const heights = new Int32Array(n);
  let s = 12345;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    heights[i] = s >>> 30;
  }
  return { shape: [side, side], origin: [side >> 1, side >> 1], heights, odometer: new Float64Array(n).fill(1), toppled: new Uint8Array(n).fill(1) };
}

async function runCase(c: CaseSpec): Promise<CaseResult> {
  const { side } = ORDERS[c.order];
  const input = syntheticInput(side);
  const runs = [{ runId: 'bench', input, chips: side * side * 2 }];
  const spec = orderSpec(c.order);
  const inputRssBytes = process.memoryUsage().rss;
  const path = join(c.dir, `${c.order}-${c.kind}.${c.format}`);
  const t0 = performance.now();
  let widthPx: number;
  let heightPx: number;
  if (c.kind === 'stream') {
    const res = await renderPrint(spec, runs, { [c.format]: path });
    ({ widthPx, heightPx } = res.files[0]);
  } else {
    // the whole page as one RGB buffer, filled from the same strips, then one sharp call
    const fig = prepareFigure(spec, runs);
    ({ widthPx, heightPx } = fig.layout.page);
    const palette = pagePalette(fig);
    const rgb = Buffer.alloc(widthPx * heightPx * 3);
    for await (const strip of pageStrips(fig, palette)) {
      const o = strip.y * widthPx * 3;
      for (let i = 0; i < strip.rows * widthPx; i++) {
        const col = palette.colours[strip.data[i]];
        rgb[o + 3 * i] = col[0];
        rgb[o + 3 * i + 1] = col[1];
        rgb[o + 3 * i + 2] = col[2];
      }
    }
    const img = sharp(rgb, { raw: { width: widthPx, height: heightPx, channels: 3 }, limitInputPixels: false }).withMetadata({ density: fig.layout.dpi });
    if (c.format === 'png') await img.png({ compressionLevel: 6 }).toFile(path);
    else await img.tiff({ compression: 'lzw', predictor: 'horizontal', resolutionUnit: 'inch' }).toFile(path);
  }
  const seconds = (performance.now() - t0) / 1000;
  const bytes = statSync(path).size;
  rmSync(path, { force: true });
  return { ...c, seconds, widthPx, heightPx, cells: side * side, bytes, maxRssBytes: process.resourceUsage().maxRSS * 1024, inputRssBytes };
}

const spawnCase = (c: CaseSpec) => runInChild<CaseResult>(fileURLToPath(import.meta.url), c, `${c.order}/${c.kind}/${c.format}`);

const mb = (b: number) => `${(b / 2 ** 20).toFixed(0)} MB`;
const grouped = (n: number) => Math.round(n).toLocaleString('en-US');

async function main(): Promise<void> {
  const { values } = parseArgs({ options: { case: { type: 'string' }, only: { type: 'string' }, 'no-baseline': { type: 'boolean' } } });
  if (values.case) {
    process.stdout.write(`${JSON.stringify(await runCase(JSON.parse(values.case) as CaseSpec))}\n`);
    return;
  }
  if (values.only !== undefined && !(values.only in ORDERS)) {
    console.error('--only: expected a4, a0 or a0-600');
    process.exit(2);
  }
  const orders: Order[] = values.only ? [values.only as Order] : ['a4', 'a0'];
  const dir = mkdtempSync(join(tmpdir(), 'tw-bench-print-'));
  try {
    console.log(`print bench: ${availableParallelism()} cores, sharp ${sharp.versions.sharp} / libvips ${sharp.versions.vips}; i.i.d. heights 0..3, palette tidewater`);
    const header = `${'order'.padEnd(11)} ${'case'.padEnd(14)} ${'page px'.padEnd(14)} ${'cells'.padStart(11)} ${'time'.padStart(8)} ${'Mpx/s'.padStart(6)} ${'file'.padStart(7)} ${'peak RSS'.padStart(9)} ${'over input'.padStart(10)}`;
    console.log(header);
    console.log('-'.repeat(header.length));
    const results: CaseResult[] = [];
    for (const order of orders) {
      const cases: CaseSpec[] = (['png', 'tiff', 'pdf'] as const).map((format) => ({ order, kind: 'stream' as const, format, dir }));
      if (!values['no-baseline']) cases.push({ order, kind: 'baseline', format: 'png', dir }, { order, kind: 'baseline', format: 'tiff', dir });
      for (const c of cases) {
        const r = await spawnCase(c);
        results.push(r);
        console.log(
          `${ORDERS[order].label.padEnd(11)} ${`${r.kind} ${r.format}`.padEnd(14)} ${`${r.widthPx} × ${r.heightPx}`.padEnd(14)} ${grouped(r.cells).padStart(11)} ` +
            `${`${r.seconds.toFixed(2)} s`.padStart(8)} ${((r.widthPx * r.heightPx) / 1e6 / r.seconds).toFixed(1).padStart(6)} ${mb(r.bytes).padStart(7)} ` +
            `${mb(r.maxRssBytes).padStart(9)} ${mb(r.maxRssBytes - r.inputRssBytes).padStart(10)}`,
        );
      }
    }
    if (!values['no-baseline']) {
      console.log('\nratios (streamed ÷ full-page buffer, same order and format; below 1 is better):');
      for (const order of orders) {
        for (const format of ['png', 'tiff'] as const) {
          const s = results.find((r) => r.order === order && r.kind === 'stream' && r.format === format)!;
          const b = results.find((r) => r.order === order && r.kind === 'baseline' && r.format === format)!;
          console.log(
            `  ${ORDERS[order].label} ${format.padEnd(4)}: time ${(s.seconds / b.seconds).toFixed(2)}, peak RSS ${(s.maxRssBytes / b.maxRssBytes).toFixed(2)}, ` +
              `RSS over input ${((s.maxRssBytes - s.inputRssBytes) / (b.maxRssBytes - b.inputRssBytes)).toFixed(2)}`,
          );
        }
      }
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

await main();

import { createHash } from 'node:crypto';
import { copyFileSync, existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { LATTICE_NAMES } from '../../renderer/src/engine/index.js';
import { writeNpy } from '../../renderer/src/npy/index.js';
import { runStatsSchema } from '../../shared/run-stats.js';
import { Workspace } from './run-cli.js';

const NPY_FIXTURES = resolve(import.meta.dirname, '../npy/fixtures');

const nonzero = (data: ArrayLike<number | bigint>) => Array.from(data).filter((v) => Number(v) !== 0).length;
const sum = (data: ArrayLike<number | bigint>) => Array.from(data).reduce<number>((a, v) => a + Number(v), 0);

// Each case spawns the real command; they are independent, so run a few at a time.
describe.concurrent('stabilize CLI: results checked against published values', () => {
  it('n = 25 on Z^2 gives the 13-site diamond of OEIS A349990 EXAMPLE, read back from the heights .npy', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const report = await w.json(['--lattice', 'square', '--chips', '25', '--heights', 'h.npy', '--odometer', 'o.npy']);
    expect(w.files()).toEqual(['h.json', 'h.npy', 'o.npy']);
    const heights = w.array('h.npy');
    expect(heights.dtype).toBe('u1'); // all heights fit in uint8
    expect(heights.shape).toEqual(report.shape);
    // OEIS A349990: a(25) = 13 nonempty sites
    expect(nonzero(heights.data as Uint8Array)).toBe(13);
    // OEIS A349990 EXAMPLE: rows 1 / 2 3 2 / 1 3 1 3 1 / 2 3 2 / 1, centred on the origin
    const diamond = [
      [0, 0, 1, 0, 0],
      [0, 2, 3, 2, 0],
      [1, 3, 1, 3, 1],
      [0, 2, 3, 2, 0],
      [0, 0, 1, 0, 0],
    ];
    const [H, W] = heights.shape as [number, number];
    const [oy, ox] = report.origin as [number, number];
    const window = diamond.map((row, dy) => row.map((_, dx) => {
      const y = oy + dy - 2;
      const x = ox + dx - 2;
      return y >= 0 && y < H && x >= 0 && x < W ? (heights.data as Uint8Array)[y * W + x] : 0;
    }));
    expect(window).toEqual(diamond);
    // mass is conserved on the infinite lattice (common practice): all 25 grains are in the array
    expect(sum(heights.data as Uint8Array)).toBe(25);
    expect(report.chips).toBe('25');
    expect(report.lattice).toBe('square');
    // odometer int64 by default, and it agrees with the reported totals
    const odometer = w.array('o.npy');
    expect(odometer.dtype).toBe('i8');
    expect(String(sum(odometer.data as BigInt64Array))).toBe(report.totalTopplings);
    expect(String((odometer.data as BigInt64Array)[oy * W + ox])).toBe(report.originOdometer);
    expect(nonzero(odometer.data as BigInt64Array)).toBe(report.toppledSites);
  });

  it.for([
    // OEIS A349990, offset 0: number of nonempty sites for n grains at the origin of Z^2 (n = 0 is
    // refused as a run of no grains, below)
    [1, 1], [4, 4], [5, 5], [16, 12], [28, 16], [32, 20], [56, 32], [60, 36], [68, 36],
  ])('n = %i on Z^2 leaves %i nonempty sites (OEIS A349990)', async ([n, expected], { onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    await w.json(['--lattice', 'square', '--chips', String(n), '--heights', 'h.npy']);
    expect(nonzero(w.array('h.npy').data as Uint8Array)).toBe(expected);
  });

  it.for([
    // OEIS A349991 (6 neighbours, threshold 6), offset 0
    [6, 6], [7, 7], [36, 18], [37, 19], [54, 18],
  ])('n = %i on the triangular lattice leaves %i nonempty sites (OEIS A349991)', async ([n, expected], { onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    await w.json(['--lattice', 'triangular', '--chips', String(n), '--heights', 'h.npy']);
    expect(nonzero(w.array('h.npy').data as Uint8Array)).toBe(expected);
  });

  it('Z^2 given as a periodic unit cell reproduces OEIS A349990 (a(25) = 13, a(68) = 36)', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    writeFileSync(w.path('z2.json'), JSON.stringify({ name: 'square-as-cell', period: [1, 1], neighbours: [[[[1, 0], [-1, 0], [0, 1], [0, -1]]]] }));
    for (const [n, expected] of [[25, 13], [68, 36]] as const) {
      const r = await w.json(['--lattice', 'periodic:z2.json', '--chips', String(n), '--heights', `p${n}.npy`]);
      expect(r.lattice).toBe('square-as-cell');
      expect(nonzero(w.array(`p${n}.npy`).data as Uint8Array)).toBe(expected);
    }
  });

  it('2m+1 grains on Z^1 spread one per site over -m..m (Anderson et al., Amer. Math. Monthly 96 (1989) 481-493)', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const m = 7;
    const report = await w.json(['--lattice', 'line', '--chips', String(2 * m + 1), '--heights', 'h.npy', '--odometer', 'o.npy']);
    const heights = w.array('h.npy');
    expect(heights.shape).toHaveLength(1);
    const [o] = report.origin as [number];
    const ones = Array.from(heights.data as Uint8Array).flatMap((v, x) => (v ? [[x - o, v]] : []));
    expect(ones).toEqual(Array.from({ length: 2 * m + 1 }, (_, k) => [k - m, 1]));
    // Odometer u(x) = T(m - |x|) solves the discrete Laplace equation of this final state (derived; triangular
    // numbers OEIS A000217), so the total is the square pyramidal number m(m+1)(2m+1)/6 (OEIS A000330).
    expect(report.originOdometer).toBe(String((m * (m + 1)) / 2));
    expect(report.totalTopplings).toBe(String((m * (m + 1) * (2 * m + 1)) / 6));
    const odometer = w.array('o.npy').data as BigInt64Array;
    for (let x = -m; x <= m; x++) {
      const expected = Math.max(0, ((m - Math.abs(x)) * (m - Math.abs(x) + 1)) / 2);
      if (o + x >= 0 && o + x < odometer.length) expect(Number(odometer[o + x])).toBe(expected);
    }
  });

  it('2m grains on Z^1 leave a hole at the origin (from memory; folklore around the 1989 Monthly paper)', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const report = await w.json(['--lattice', 'line', '--chips', '10', '--heights', 'h.npy']);
    const data = w.array('h.npy').data as Uint8Array;
    const [o] = report.origin as [number];
    const occupied = Array.from(data).flatMap((v, x) => (v ? [x - o] : []));
    expect(occupied).toEqual([-5, -4, -3, -2, -1, 1, 2, 3, 4, 5]);
  });

  it('background 2 on Z^2 topples a square ("Limiting shapes for deterministic centrally seeded growth models", J. Stat. Phys. 130 (2008), arXiv:math/0702450)', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const report = await w.json(['--lattice', 'square', '--chips', '1000', '--background', 'constant:2', '--odometer', 'o.npy']);
    const [[y0, y1], [x0, x1]] = report.bbox as [number, number][];
    expect(y1 - y0).toBe(x1 - x0);
    expect(report.toppledSites).toBe((y1 - y0 + 1) * (x1 - x0 + 1));
  });
});

describe.concurrent('stabilize CLI: outputs and options', () => {
  it('takes 0 grains at the origin when a further source holds grains, as the API does', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const report = await w.json(['--lattice', 'square', '--chips', '0', '--source', '2,0:5', '--heights', 'h.npy']);
    expect(w.readJson('h.json').spec).toMatchObject({ chips: 0, sources: [{ at: [2, 0], chips: 5 }] });
    expect(report.grainsIn).toBe('5');
    const heights = w.array('h.npy');
    // all 5 grains are in the array (mass conservation), on 5 sites as at the origin (OEIS A349990, n = 5)
    expect(sum(heights.data as Uint8Array)).toBe(5);
    expect(nonzero(heights.data as Uint8Array)).toBe(5);
  });

  it('writes a sidecar with the full spec, engine version, statistics and the sha256 of the heights bytes', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const report = await w.json(['--lattice', 'square', '--chips', '300', '--source', '5,-3:40', '--heights', 'pile.npy', '--odometer', 'odo.npy', '--odometer-dtype', 'float64']);
    const sidecar = w.readJson('pile.json');
    expect(sidecar.spec).toEqual({ lattice: { preset: 'square' }, chips: 300, sources: [{ at: [5, -3], chips: 40 }], background: { kind: 'constant', height: 0 } });
    expect(sidecar.engineVersion).toBe(report.engineVersion);
    expect(runStatsSchema.parse(sidecar.stats).totalTopplings).toBe(report.totalTopplings);
    expect(sidecar.odometer.dtype).toBe('float64');
    expect(w.array('odo.npy').dtype).toBe('f8');
    // hash of the bytes after the .npy header, recomputed by node:crypto straight from the file
    const file = readFileSync(w.path('pile.npy'));
    const headerLength = file.readUInt16LE(8);
    expect(createHash('sha256').update(file.subarray(10 + headerLength)).digest('hex')).toBe(sidecar.heights.sha256);
    expect(sum(w.array('pile.npy').data as Uint8Array)).toBe(340); // mass conservation (common practice)
  });

  it('JSON report carries the documented fields with bigint counts as decimal strings', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const report = await w.json(['--lattice', 'square', '--chips', '1e3']);
    for (const key of ['lattice', 'chips', 'shape', 'origin', 'toppledSites', 'totalTopplings', 'originOdometer', 'bbox', 'radiusEuclidean', 'radiusLinf', 'heightCounts', 'seconds']) {
      expect(report).toHaveProperty(key);
    }
    expect(report.chips).toBe('1000');
    expect(report.totalTopplings).toMatch(/^\d+$/);
    expect(report.bbox).toHaveLength(2);
    expect(w.files()).toEqual([]); // nothing asked for, nothing written
  });

  it('prints a short human summary with grouped numbers and n as a power of ten', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const r = await w.ok(['--lattice', 'square', '--chips', '10000']);
    expect(r.stdout).toContain('n = 10,000 (10^4)');
    expect(r.stdout).toMatch(/topplings\s+[\d,]+,\d{3}/);
    // the engine's certificate in words (shared/certificate-words.ts): this square pile passes every check
    expect(r.stdout).toMatch(/^certificate\s+passed: stable, grains conserved, odometer explained, minimal \((seeded, \d+ repair rounds?|legal topplings)\)$/m);
  });

  it('names the line\'s closed form in the summary\'s certificate', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const r = await w.ok(['--lattice', 'line', '--chips', '1000']);
    expect(r.stdout).toMatch(/^certificate\s+passed: .*\(closed form on the line\)$/m);
  });

  it('takes an 8-bit grayscale PNG background, mapping its grey levels in ascending order to 0, 1, 2', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    // 3×3 image with greys 40 (heights 0), 90 (1) and 200 (2), made by sharp (a general-purpose library)
    const greys = [40, 90, 40, 200, 90, 200, 40, 90, 40];
    await sharp(Buffer.from(greys), { raw: { width: 3, height: 3, channels: 1 } }).toColourspace('b-w').png().toFile(w.path('bg.png'));
    await w.json(['--lattice', 'square', '--chips', '200', '--background', 'file:bg.png', '--heights', 'h.npy']);
    const sidecar = w.readJson('h.json');
    expect(sidecar.backgroundPngLevels).toEqual([40, 90, 200]);
    expect(sidecar.spec.background.kind).toBe('array');
    expect(sidecar.spec.background.shape).toEqual([3, 3]);
    const mapped = Int32Array.from(greys, (g) => [40, 90, 200].indexOf(g));
    expect(sidecar.spec.background.sha256).toBe(createHash('sha256').update(Buffer.from(mapped.buffer)).digest('hex'));
    // conservation (common practice): final grains = 200 added + the 7 background grains
    expect(sum(w.array('h.npy').data as Uint8Array)).toBe(207);
  });

  it('takes a big-endian int16 .npy background and a .npy motif', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    writeFileSync(w.path('bg.npy'), writeNpy([3, 3], new Int16Array([1, 0, 1, 0, 2, 0, 1, 0, 1]), { endian: 'big' }));
    writeFileSync(w.path('motif.npy'), writeNpy([2, 2], new Uint8Array([0, 1, 1, 0])));
    const a = await w.json(['--lattice', 'square', '--chips', '100', '--background', 'file:bg.npy', '--heights', 'a.npy']);
    expect(sum(w.array('a.npy').data as Uint8Array)).toBe(106);
    expect(a.toppledSites).toBeGreaterThan(0);
    const b = await w.json(['--lattice', 'square', '--chips', '100', '--background', 'motif:motif.npy', '--heights', 'b.npy']);
    expect(w.readJson('b.json').spec.background).toEqual({ kind: 'motif', cells: [[0, 1], [1, 0]] });
    expect(b.toppledSites).toBeGreaterThan(0);
  });

  it('checkerboard backgrounds conserve mass and random backgrounds are reproducible from their seed', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const r = await w.json(['--lattice', 'square', '--chips', '150', '--background', 'checkerboard:1,0', '--heights', 'c.npy']);
    const c = w.array('c.npy');
    const [H, W] = c.shape as [number, number];
    const [oy, ox] = r.origin as [number, number];
    let background = 0; // a = 1 where x + y is even (shared/run-spec.ts), counted over the array by hand
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) background += (x - ox + y - oy) % 2 === 0 ? 1 : 0;
    expect(sum(c.data as Uint8Array)).toBe(150 + background); // conservation (common practice)
    const args = ['--lattice', 'square', '--chips', '500', '--background', 'random:7:1,1,1'];
    const [a, b] = await Promise.all([w.json([...args, '--heights', 'r1.npy']), w.json([...args, '--heights', 'r2.npy'])]);
    expect(a.totalTopplings).toBe(b.totalTopplings);
    expect(w.readJson('r1.json').heights.sha256).toBe(w.readJson('r2.json').heights.sha256);
    expect(w.readJson('r1.json').spec.background).toEqual({ kind: 'random', seed: 7, weights: [1, 1, 1] });
  });

  it('prints --help and exits 0', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    const r = await w.ok(['--help']);
    expect(r.stdout).toContain('--lattice');
    expect(r.stdout).toContain('--odometer-dtype');
    // every lattice the engine accepts by name is offered (the list once left out f-lattice and manhattan)
    const offered = r.stdout.split('\n').find((l) => l.trimStart().startsWith('--lattice NAME'))!;
    for (const name of LATTICE_NAMES) expect(offered).toContain(name);
  });
});

describe.concurrent('stabilize CLI: bad input exits non-zero with one stderr line and writes nothing', () => {
  const out = ['--heights', 'h.npy', '--odometer', 'o.npy'];
  const cases: [string, string[], RegExp, (dir: string) => void][] = [
    ['negative --chips', ['--lattice', 'square', '--chips', '-5', ...out], /--chips must be at least 0/, () => {}],
    ['fractional --chips', ['--lattice', 'square', '--chips', '2.5', ...out], /--chips must be a whole number/, () => {}],
    ['--chips above 2^53 - 1', ['--lattice', 'square', '--chips', '9007199254740993', ...out], /larger than 2\^53/, () => {}],
    ['missing --chips', ['--lattice', 'square', ...out], /--chips is required/, () => {}],
    // the API's rule for a new run (shared/run-spec.ts newRunSpecSchema): at least one grain in all
    ['no grains at all', ['--lattice', 'square', '--chips', '0', ...out], /invalid run specification: chips: must be at least 1 \(a run needs at least one grain in all: --chips 0 only with a --source that adds grains\)$/, () => {}],
    ['no grains in the sources either', ['--lattice', 'triangular', '--chips', '0', '--source', '3,1:0', '--source', '-2,0:0', ...out], /chips: must be at least 1 \(a run needs at least one grain in all/, () => {}],
    ['unknown lattice', ['--lattice', 'hexagonal-ish', '--chips', '5', ...out], /unknown lattice 'hexagonal-ish'/, () => {}],
    ['unknown option', ['--lattice', 'square', '--chips', '5', '--colour', 'red', ...out], /Unknown option '--colour'/, () => {}],
    ['periodic file that is not JSON', ['--lattice', 'periodic:cell.json', '--chips', '5', ...out], /not valid JSON/, (d) => writeFileSync(join(d, 'cell.json'), '{"period": [2, 2], "neighbours": [')],
    ['periodic file with a bad period', ['--lattice', 'periodic:cell.json', '--chips', '5', ...out], /periodic lattice cell\.json: period/, (d) => writeFileSync(join(d, 'cell.json'), '{"period": [0, 2], "neighbours": []}')],
    ['missing periodic file', ['--lattice', 'periodic:nope.json', '--chips', '5', ...out], /cannot read periodic lattice nope\.json: no such file/, () => {}],
    // all-3 on Z^2 is the maximal stable background: one grain already explodes (Sadhu & Dhar, arXiv:1109.2908)
    ['explosive background', ['--lattice', 'square', '--chips', '1', '--background', 'constant:3', ...out], /never stops|cannot be finite/, () => {}],
    ['site budget reached', ['--lattice', 'square', '--chips', '1e6', '--max-sites', '5000', ...out], /did not stabilize within the bound of 5000 sites/, () => {}],
    ['unknown background', ['--lattice', 'square', '--chips', '5', '--background', 'stripes:1,2', ...out], /unknown background 'stripes'/, () => {}],
    ['corrupt .npy background', ['--lattice', 'square', '--chips', '5', '--background', 'file:bg.npy', ...out], /truncated \.npy data/, (d) => writeFileSync(join(d, 'bg.npy'), readFileSync(join(NPY_FIXTURES, 'i4-le-v1.npy')).subarray(0, 140))],
    ['Fortran-order .npy', ['--lattice', 'square', '--chips', '5', '--background', 'file:bg.npy', ...out], /Fortran-order/, (d) => copyFileSync(join(NPY_FIXTURES, 'i4-fortran.npy'), join(d, 'bg.npy'))],
    ['float .npy', ['--lattice', 'square', '--chips', '5', '--background', 'file:bg.npy', ...out], /not an integer type/, (d) => copyFileSync(join(NPY_FIXTURES, 'f8-le-v1.npy'), join(d, 'bg.npy'))],
    ['3-D upload on a 2-D lattice', ['--lattice', 'square', '--chips', '5', '--background', 'file:bg.npy', ...out], /shape \(2, 3, 4\) but the square lattice needs a 2-dimensional array/, (d) => copyFileSync(join(NPY_FIXTURES, 'i4-3d-v1.npy'), join(d, 'bg.npy'))],
    ['negative heights in an upload', ['--lattice', 'square', '--chips', '5', '--background', 'file:bg.npy', ...out], /heights must lie in 0 \.\. 2\^31−1, found -128/, (d) => copyFileSync(join(NPY_FIXTURES, 'i1-na-v1.npy'), join(d, 'bg.npy'))],
    ['1-D motif', ['--lattice', 'square', '--chips', '5', '--background', 'motif:m.npy', ...out], /expected a 2-D array/, (d) => writeFileSync(join(d, 'm.npy'), writeNpy([3], new Uint8Array([0, 1, 2])))],
    ['source with the wrong number of coordinates', ['--lattice', 'line', '--chips', '5', '--source', '1,2:3', ...out], /has 2 coordinate\(s\); this lattice needs 1/, () => {}],
    ['sidecar would overwrite the lattice file', ['--lattice', 'periodic:h.json', '--chips', '5', ...out], /output h\.json would overwrite an input file/, (d) => writeFileSync(join(d, 'h.json'), JSON.stringify({ period: [1, 1], neighbours: [[[[1, 0], [-1, 0], [0, 1], [0, -1]]]] }))],
    ['output folder missing', ['--lattice', 'square', '--chips', '5', '--heights', 'nowhere/h.npy'], /folder .* does not exist/, () => {}],
    ['--checkpoint-every without --checkpoint', ['--lattice', 'square', '--chips', '5', '--checkpoint-every', '60', ...out], /--checkpoint-every needs --checkpoint FILE/, () => {}],
    ['--checkpoint-every of no time', ['--lattice', 'square', '--chips', '5', '--checkpoint', 's.snap', '--checkpoint-every', '0', ...out], /--checkpoint-every must be a positive number of seconds, got '0'/, () => {}],
    ['checkpoint named like an output', ['--lattice', 'square', '--chips', '5', '--checkpoint', 'h.json', ...out], /--checkpoint h\.json must not be an input or output file/, () => {}],
    // a damaged snapshot is refused and kept (it may hold hours of work), never silently replaced
    ['damaged checkpoint', ['--lattice', 'square', '--chips', '5', '--checkpoint', 's.snap', ...out], /--checkpoint s\.snap: .*; remove it to start afresh$/, (d) => writeFileSync(join(d, 's.snap'), 'not a snapshot')],
  ];

  it.for(cases)('%s', async ([label, args, message, setup], { onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    setup(w.dir);
    const before = w.files();
    writeFileSync(w.path('h.npy'), 'keep me'); // an existing file must survive a failed run untouched
    const r = await w.run(args);
    // exit 3 when the engine refuses (explosion, budget), 2 for every other bad input
    expect(r.status).toBe(/explosive|budget/.test(label) ? 3 : 2);
    expect(r.stdout).toBe('');
    const lines = r.stderr.split('\n').filter(Boolean);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^stabilize: /);
    expect(lines[0]).toMatch(message);
    expect(w.files()).toEqual([...before, 'h.npy'].sort());
    expect(readFileSync(w.path('h.npy'), 'utf8')).toBe('keep me');
  });

  it('rejects PNG backgrounds that are not 8-bit grayscale', async ({ onTestFinished }) => {
    const w = new Workspace(onTestFinished);
    await sharp({ create: { width: 4, height: 4, channels: 3, background: { r: 10, g: 20, b: 30 } } }).png().toFile(w.path('rgb.png'));
    const grey = sharp(Buffer.alloc(16, 7), { raw: { width: 4, height: 4, channels: 1 } });
    await grey.clone().toColourspace('grey16').png().toFile(w.path('deep.png'));
    await grey.clone().toColourspace('b-w').ensureAlpha().png().toFile(w.path('alpha.png'));
    await grey.clone().toColourspace('b-w').png({ palette: true }).toFile(w.path('palette.png'));
    writeFileSync(w.path('broken.png'), Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), Buffer.alloc(20)]));
    for (const [name, why] of [['rgb', /got a 3-channel/], ['deep', /got a 1-channel ushort/], ['alpha', /got a 2-channel/], ['palette', /palette/], ['broken', /cannot decode PNG/]] as const) {
      const r = await w.run(['--lattice', 'square', '--chips', '5', '--background', `file:${name}.png`, '--heights', 'h.npy']);
      expect(r.status).toBe(2);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(new RegExp(`^stabilize: background ${name}\\.png: `));
      expect(r.stderr).toMatch(why);
      if (name !== 'broken') expect(r.stderr).toMatch(/PNG backgrounds must be 8-bit grayscale without alpha/);
    }
    expect(w.files()).not.toContain('h.npy');
  });
});

describe('stabilize CLI: --checkpoint', () => {
  /** Starts a run, interrupts it (SIGINT) once it has saved, and returns what it printed. */
  async function interruptAfterSave(w: Workspace, args: string[]) {
    const { child, done } = w.start(args);
    let ended = false;
    void done.then(() => (ended = true));
    while (!ended && !existsSync(w.path('s.snap'))) await new Promise((r) => setTimeout(r, 20));
    child.kill('SIGINT');
    return done;
  }

  it('an interrupted run continues from its snapshot to the same result as an uninterrupted one', async ({ onTestFinished }) => {
    // 4·10^6 grains take the seeded fast path for a few seconds: long enough to be caught saving
    const args = ['--lattice', 'square', '--chips', '4e6', '--heights', 'h.npy'];
    const whole = new Workspace(onTestFinished);
    const expected = await whole.json(args);
    expect(expected.checkpoint).toBeUndefined();

    const w = new Workspace(onTestFinished);
    const withSaves = [...args, '--checkpoint', 's.snap', '--checkpoint-every', '0.2'];
    const stopped = await interruptAfterSave(w, withSaves);
    expect(stopped.status).toBe(130);
    expect(stopped.stderr.trim()).toBe('stabilize: interrupted; no output written; s.snap holds the last saved state, and the same command continues from it');
    expect(w.files()).toEqual(['s.snap']);

    // another problem must not continue from this snapshot, and the snapshot survives the refusal
    const other = await w.run(['--lattice', 'square', '--chips', '3e6', '--heights', 'h.npy', '--checkpoint', 's.snap']);
    expect(other.status).toBe(2);
    expect(other.stderr).toMatch(/^stabilize: the checkpoint is not of this run: .*; remove it to start afresh\n$/);
    expect(w.files()).toEqual(['s.snap']);

    const resumed = await w.json(withSaves);
    expect(resumed.checkpoint).toMatchObject({ file: 's.snap', resumed: true });
    // the snapshot is gone once the outputs are written; they are the uninterrupted run's, bit for bit
    expect(w.files()).toEqual(['h.json', 'h.npy']);
    expect(w.readJson('h.json').heights.sha256).toBe(whole.readJson('h.json').heights.sha256);
    for (const key of ['totalTopplings', 'toppledSites', 'originOdometer', 'shape', 'heightCounts', 'certificate'] as const) {
      expect(resumed[key]).toEqual(expected[key]);
    }
  }, 120_000); // four runs of a few seconds each, on a machine shared with the rest of the suite
});

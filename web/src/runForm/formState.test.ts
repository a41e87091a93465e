import { describe, expect, test } from 'vitest';
import { randomUUID } from 'node:crypto';
import { createRunRequestSchema, runSpecSchema } from '../api/contract.js';
import { validate } from '../ui/formErrors.js';
import type { Layer, PaletteId } from '../../../shared/palettes.js';
import { checkCell } from './UnitCellEditor.js';
import { dimensionOfForm, emptyForm, errorsAfterEdit, formOfSpec, grainCountHint, motifWording, parseGrainList, parseGrains, resizeCell, seriesScaleHint, specOfForm, SQUARE_CELL, toggled, toggleOffset } from './formState.js';

describe('grain counts as people type them', () => {
  test('grouped, powers of ten and exponent notation', () => {
    expect(parseGrains('1,000,000')).toBe(1_000_000);
    expect(parseGrains('10^6')).toBe(1_000_000);
    expect(parseGrains('2.5×10^6')).toBe(2_500_000);
    expect(parseGrains('1e5')).toBe(100_000);
    expect(parseGrains('')).toBeNaN();
    expect(parseGrainList('10^4, 10^5, 10^6')).toEqual([1e4, 1e5, 1e6]);
    expect(parseGrainList('10000 40000')).toEqual([1e4, 4e4]);
  });
});

describe('the grain count of a new run', () => {
  test('0 grains is refused beside the field, before anything is sent', () => {
    const r = validate(createRunRequestSchema, { labId: randomUUID(), title: 'Nothing at all', spec: specOfForm({ ...emptyForm(), chips: '0' }) });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors).toEqual({ 'spec.chips': 'must be at least 1' });
    expect(validate(createRunRequestSchema, { labId: randomUUID(), title: 'One grain', spec: specOfForm({ ...emptyForm(), chips: '1' }) }).ok).toBe(true);
  });

  test('a stored specification of 0 grains still reads back (runs from before the rule)', () => {
    expect(runSpecSchema.parse({ lattice: { preset: 'square' }, chips: 0 }).chips).toBe(0);
  });
});

describe('form ↔ specification', () => {
  test('the default form is a valid square-lattice spec', () => {
    const spec = runSpecSchema.parse(specOfForm(emptyForm()));
    expect(spec).toEqual({ lattice: { preset: 'square' }, chips: 1_000_000, sources: [], background: { kind: 'constant', height: 0 } });
  });

  test('every background kind and extra sources survive duplicate-with-edits unchanged', () => {
    const specs = [
      { lattice: { preset: 'honeycomb' }, chips: 5000, sources: [{ at: [4, -3], chips: 200 }], background: { kind: 'checkerboard', a: 1, b: 0 } },
      { lattice: { preset: 'triangular' }, chips: 7, sources: [], background: { kind: 'random', seed: 42, weights: [1, 2, 1] } },
      { lattice: { preset: 'square' }, chips: 9, sources: [], background: { kind: 'motif', cells: [[2, 1], [1, 2], [0, 0]] } },
      { lattice: { preset: 'square' }, chips: 9, sources: [], background: { kind: 'annuli', a: 2, b: 1 } },
      { lattice: { preset: 'square' }, chips: 9, sources: [], background: { kind: 'array', sha256: 'a'.repeat(64), shape: [3, 5] } },
      { lattice: { periodic: { period: [2, 1], neighbours: [[[[1, 0], [-1, 0]], [[1, 0], [-1, 0], [0, 1], [0, -1]]]] }, name: 'ladder-ish' }, chips: 11, sources: [], background: { kind: 'constant', height: 1 } },
    ];
    for (const s of specs) {
      const spec = runSpecSchema.parse(s);
      expect(runSpecSchema.parse(specOfForm(formOfSpec(spec, 'copy')))).toEqual(spec);
    }
  });

  test('the drawing choice survives duplicate-with-edits, in canonical order; the default stays out of the spec', () => {
    const spec = runSpecSchema.parse({
      lattice: { preset: 'square' },
      chips: 9,
      background: { kind: 'constant', height: 1 },
      render: { layers: ['heights', 'difference'], palettes: ['kiln', 'newsprint'], untoppled: 'transparent' },
    });
    expect(runSpecSchema.parse(specOfForm(formOfSpec(spec, 'copy')))).toEqual(spec);
    const f = { ...emptyForm(), layers: toggled<Layer>(['odometer', 'heights'], 'toppled'), palettes: toggled<PaletteId>(['tidewater'], 'kiln') };
    expect(specOfForm(f).render).toEqual({ layers: ['heights', 'toppled', 'odometer'], palettes: ['tidewater', 'kiln'], untoppled: 'neutral' });
    expect('render' in specOfForm({ ...emptyForm(), layers: ['odometer', 'toppled', 'heights'] as Layer[] })).toBe(false);
  });

  test("the engine's periodic presets are sent as their unit cell with their name", () => {
    const f = { ...emptyForm(), preset: 'f-lattice' };
    const spec = runSpecSchema.parse(specOfForm(f));
    expect(spec.lattice).toMatchObject({ name: 'f-lattice', periodic: { period: [2, 2] } });
    expect(formOfSpec(spec, 'x').preset).toBe('f-lattice');
  });
});

describe('unit cell editor', () => {
  test('Z² as one class with its four neighbours is symmetric, degree 4 (common practice)', () => {
    expect(checkCell(SQUARE_CELL)).toEqual({ ok: true, symmetric: true, degrees: [4] });
  });

  test('dropping one direction makes the graph directed', () => {
    const g = toggleOffset(SQUARE_CELL, 0, 0, -1, 0);
    expect(checkCell(g)).toMatchObject({ ok: true, symmetric: false, degrees: [3] });
    expect(toggleOffset(g, 0, 0, -1, 0).neighbours[0]![0]).toHaveLength(4);
  });

  test('the brick wall (honeycomb as a subgraph of Z², up from even x+y, down from odd) is symmetric, degree 3 (common practice)', () => {
    let g = resizeCell(SQUARE_CELL, 2, 2);
    for (const [x, y] of [[0, 0], [1, 1]]) g = toggleOffset(g, x!, y!, 0, -1);
    for (const [x, y] of [[1, 0], [0, 1]]) g = toggleOffset(g, x!, y!, 0, 1);
    expect(checkCell(g)).toEqual({ ok: true, symmetric: true, degrees: [3, 3, 3, 3] });
  });

  test('a class with no outgoing edge is refused with the engine’s message', () => {
    let g = SQUARE_CELL;
    for (const [dx, dy] of [[1, 0], [-1, 0], [0, 1], [0, -1]]) g = toggleOffset(g, 0, 0, dx!, dy!);
    const c = checkCell(g);
    expect(c.ok).toBe(false);
    if (!c.ok) expect(c.message).toMatch(/no outgoing edges/);
  });
});

describe('what a series is rescaled by, as the form says it', () => {
  test('names the unit the series page divides by: n on the line, √n on the plane, ∛n on the cubic lattice', () => {
    const hint = (preset: string, latticeMode: 'preset' | 'cell' = 'preset') => seriesScaleHint({ ...emptyForm(), preset, latticeMode });
    expect(hint('line')).toMatch(/rescaled by n$/);
    expect(hint('square')).toMatch(/rescaled by √n$/);
    expect(hint('triangular')).toMatch(/rescaled by √n$/);
    expect(hint('manhattan')).toMatch(/rescaled by √n$/);
    expect(hint('cubic')).toMatch(/rescaled by ∛n$/);
    expect(hint('square', 'cell')).toMatch(/rescaled by √n$/);
  });
});

describe('errors of the last submit while the author fixes the form', () => {
  const refused = () => {
    const r = validate(createRunRequestSchema, { labId: randomUUID(), title: '', spec: specOfForm({ ...emptyForm(), chips: '0' }) });
    if (r.ok) throw new Error('an empty title and 0 grains were accepted');
    return r.errors;
  };

  test('typing a title takes "title is required" away and leaves the grain count refused', () => {
    const errors = refused();
    expect(Object.keys(errors).sort()).toEqual(['spec.chips', 'title']);
    expect(errorsAfterEdit(errors, { title: 'One million grains' })).toEqual({ 'spec.chips': 'must be at least 1' });
    expect(errorsAfterEdit(errors, { chips: '10^6' })).toEqual({ title: errors.title });
  });

  test('a field answers for its own paths and those under it, not for look-alike names', () => {
    const errors = { 'spec.sources.0.at': 'x', 'spec.sourcesExtra': 'y', 'spec.background.cells': 'z', 'spec.background': 'w', seriesChips: 'v' };
    expect(errorsAfterEdit(errors, { sources: [] })).toEqual({ 'spec.sourcesExtra': 'y', 'spec.background.cells': 'z', 'spec.background': 'w', seriesChips: 'v' });
    // another lattice changes the thresholds a background is judged against
    expect(errorsAfterEdit(errors, { preset: 'triangular' })).toEqual({ 'spec.sources.0.at': 'x', 'spec.sourcesExtra': 'y', seriesChips: 'v' });
    expect(errorsAfterEdit(errors, { mode: 'single' })).toEqual({ 'spec.sources.0.at': 'x', 'spec.sourcesExtra': 'y', 'spec.background.cells': 'z', 'spec.background': 'w' });
  });

  test('an edit that touches no refused field keeps the same errors object (no extra render)', () => {
    const errors = { title: 'title is required' };
    expect(errorsAfterEdit(errors, { palettes: ['kiln'] })).toBe(errors);
    expect(errorsAfterEdit({}, { title: 'x' })).toEqual({});
  });
});

describe('the hint under the grain count', () => {
  test('a count too large names the largest accepted and why, not "at least 1"', () => {
    // "1e20" parses as a number: it is its size that is refused, by the same words the schema uses
    for (const typed of ['1e20', '10^20', '9007199254740992']) {
      expect(grainCountHint(parseGrains(typed)), typed).toBe('must be at most 9,007,199,254,740,991 (2⁵³\u00a0−\u00a01), the largest grain count held exactly');
    }
    const r = validate(createRunRequestSchema, { labId: randomUUID(), title: 'Too many', spec: specOfForm({ ...emptyForm(), chips: '1e20' }) });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors['spec.chips']).toBe(grainCountHint(1e20));
    // the largest count itself is accepted
    expect(grainCountHint(parseGrains('9007199254740991'))).toBeNull();
    expect(validate(createRunRequestSchema, { labId: randomUUID(), title: 'Most', spec: specOfForm({ ...emptyForm(), chips: '9007199254740991' }) }).ok).toBe(true);
  });

  test('text, fractions and counts below 1 ask for a whole number of at least 1', () => {
    for (const n of [NaN, 1.5, 0, -3]) expect(grainCountHint(n)).toBe('a whole number of at least 1, e.g. 1000000 or 10^6');
    expect(grainCountHint(1)).toBeNull();
  });
});

describe('the motif field follows the lattice', () => {
  test('a line has no rows: its label speaks of the line, and extra rows are said to be unused', () => {
    expect(dimensionOfForm({ latticeMode: 'preset', preset: 'line' })).toBe(1);
    const line = motifWording(1, '2 1 0');
    expect(line.label).toBe('Motif: heights along the line (x mod their number), separated by spaces');
    expect(line.label).not.toMatch(/row/);
    expect(line.note).toBeUndefined();
    expect(motifWording(1, '2 1\n1 2').note).toBe('the line repeats the first row only; the other row is not used');
    expect(motifWording(1, '2\n1\n0').note).toBe('the line repeats the first row only; the other 2 rows are not used');
  });

  test('planar lattices and unit cells read rows; the cubic lattice repeats them on every layer', () => {
    expect(dimensionOfForm({ latticeMode: 'preset', preset: 'square' })).toBe(2);
    expect(dimensionOfForm({ latticeMode: 'cell', preset: 'line' })).toBe(2);
    expect(dimensionOfForm({ latticeMode: 'preset', preset: 'cubic' })).toBe(3);
    expect(motifWording(2, '2 1\n1 2')).toEqual({ label: 'Motif: one line per row (y mod rows), heights separated by spaces' });
    expect(motifWording(3, '2 1\n1 2').label).toBe('Motif: one line per row (y mod rows), heights separated by spaces; the same on every layer z');
  });
});

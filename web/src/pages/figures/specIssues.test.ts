import { describe, expect, test } from 'vitest';
import { friendlyMessage } from '../../../../shared/api/errors.js';
import { printableFigureSpecSchema, type FigureSpecInput } from '../../../../shared/print-spec.js';
import { fieldOfPath, specIssueLines } from './specIssues.js';

/** What the proof lists for a composition, through the same schema and wording the composer uses. */
function proofLines(patch: Partial<FigureSpecInput>): string[] {
  const spec: FigureSpecInput = { size: { kind: 'column', column: 'single' }, panels: [{ runId: 'r1' }], ...patch };
  const r = printableFigureSpecSchema.safeParse(spec, { error: friendlyMessage });
  return r.success ? [] : specIssueLines(r.error.issues);
}

describe("the proof's list of settings that are not valid yet", () => {
  test('names the fields as the composer labels them, never a schema path', () => {
    const lines = [
      ...proofLines({ dpi: 30_000 }),
      ...proofLines({ margins: { top: -5, right: 10, bottom: 10, left: 10 } }),
      ...proofLines({ grid: { rows: 0, cols: 1 } }),
      ...proofLines({ panels: [{ runId: 'r1', region: { xMin: 100, xMax: 50, yMin: 0, yMax: 10 } }] }),
    ];
    expect(lines).toEqual([
      'DPI: must be at most 1,200',
      'Top margin: must be at least 0',
      'Grid rows: must be at least 1',
      'Grid: 1 panel does not fit a 0 × 1 grid',
      'Panel 1: region needs xMin ≤ xMax and yMin ≤ yMax',
    ]);
    for (const l of lines) expect(l).not.toMatch(/\b(panels|margins|grid)\.\w/);
  });

  test('counts panels from one, as the panel editor does', () => {
    const two = proofLines({ grid: { rows: 1, cols: 2 }, panels: [{ runId: 'r1' }, { runId: 'r2', magnification: 0 }] });
    expect(two).toEqual(['Panel 2 px per cell: must be at least 1']);
    expect(fieldOfPath(['panels', 0, 'region', 'yMax'])).toBe('Panel 1 yMax');
  });

  test('a refusal of the whole composition still says where', () => {
    expect(fieldOfPath([])).toBe('Figure');
    expect(fieldOfPath(['size', 'heightMm'])).toBe('Page height');
  });
});

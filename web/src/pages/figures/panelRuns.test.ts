import { describe, expect, test } from 'vitest';
import type { FigureRun } from '../../../../shared/api/figures.js';
import { panelRuns } from './panelRuns.js';

const run = (id: string): FigureRun => ({ id, title: `run ${id}`, lattice: 'square', background: 'constant', chips: 1000, shape: [21, 21], origin: [10, 10], certificate: null });
const A = '00000000-0000-4000-8000-00000000000a';
const B = '00000000-0000-4000-8000-00000000000b';

describe('the runs behind a figure\'s panels', () => {
  test('each run once, in panel order, with the labels printed on its panels', () => {
    const spec = { labels: 'letters' as const, panels: [{ runId: B }, { runId: A }, { runId: B, label: 'zoom' }] };
    const got = panelRuns(spec, [run(A), run(B)]);
    expect(got.map((g) => [g.run.id, g.panels])).toEqual([
      [B, ['(a)', 'zoom']],
      [A, ['(b)']],
    ]);
  });

  test('panels without a printed label are named by their place', () => {
    expect(panelRuns({ labels: 'letters', panels: [{ runId: A }] }, [run(A)])[0]!.panels).toEqual(['panel 1']);
    expect(panelRuns({ labels: 'none', panels: [{ runId: A }, { runId: B }] }, [run(A), run(B)]).map((g) => g.panels[0])).toEqual(['panel 1', 'panel 2']);
  });
});

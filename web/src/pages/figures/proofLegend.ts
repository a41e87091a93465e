import type { LayerStats } from '../../../../shared/palettes.js';
import { panelLegend, type PanelLegend } from '../../../../shared/print-marks.js';
import type { FigureSpec } from '../../../../shared/print-spec.js';
import type { FigureLayout } from '../../../../shared/print-layout.js';

/** What the proof knows of a run: its title (for messages) and its array box. */
export interface ProofRun {
  title: string;
  stats: { shape: readonly number[]; origin: readonly number[] } | null;
}

/**
 * The legend rows of the proof, from the whole-plane statistics the render worker stores with every
 * drawn view (legend.json): for a 2-D run, and for a 3-D run's source slice, those are the numbers
 * the print computes from the plane it draws, so the proof shows the print's palette and ticks.
 * `statsOf` answers undefined while loading and null when the run has no stored view. Another slice,
 * or a difference layer of a run that drew no difference view, has scales only the print computes:
 * then the reason is returned instead.
 */
export function proofLegends(
  spec: FigureSpec,
  layout: FigureLayout,
  runs: ReadonlyMap<string, ProofRun>,
  statsOf: (runId: string) => LayerStats | null | undefined,
): { legends: PanelLegend[] } | { missing: string } {
  const legends: PanelLegend[] = [];
  for (const pl of layout.panels) {
    const ps = spec.panels[pl.index]!;
    const run = runs.get(ps.runId);
    const name = `run “${run?.title ?? ps.runId}”`;
    const stats = statsOf(ps.runId);
    if (stats === undefined) return { missing: 'reading the colour scales…' };
    if (stats === null || !run?.stats) return { missing: `the legend is drawn at print time: ${name} has no stored view to read its colour scale from` };
    if (run.stats.shape.length === 3 && pl.zIndex !== run.stats.origin[0]) return { missing: `the legend is drawn at print time: panel ${pl.index + 1} shows a slice whose colour scale is computed then` };
    if (ps.layer === 'difference' && stats.minDifference === undefined) return { missing: `the legend is drawn at print time: ${name} drew no difference view to read its scale from` };
    legends.push(panelLegend(ps, stats));
  }
  return { legends };
}

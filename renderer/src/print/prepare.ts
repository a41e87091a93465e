import type { LayerStats, Legend, Rgba } from '../../../shared/palettes.js';
import { panelLegend } from '../../../shared/print-marks.js';
import { figureSpecSchema, type FigureSpec, type PanelSpec } from '../../../shared/print-spec.js';
import { layoutFigure, type FigureLayout, type PanelLayout } from '../../../shared/print-layout.js';
import { computeStats } from '../render/stats.js';
import { indexHistogram, layerScale, type LayerScale } from '../render/layers.js';
import { planeOf, type BackgroundSource, type Plane, type RenderInput } from '../render/plane.js';
import { tiePriority } from '../render/reduce.js';
import { PrintInputError } from './errors.js';

/** A finished run as the print engine reads it: the engine's Outcome arrays plus n. */
export interface PrintRun {
  runId: string;
  input: RenderInput;
  /** n, the grains added (rescaled units x/√n) */
  chips: number;
  /** the run's initial heights, needed by the difference layer */
  background?: BackgroundSource;
  /** whole-plane stats computed earlier (saves a pass); must match the plane printed */
  stats?: LayerStats;
}

export { PAPER, INK } from '../../../shared/print-marks.js';

/** Everything needed to draw one panel, fixed once per order. */
export interface PreparedPanel {
  spec: PanelSpec;
  layout: PanelLayout;
  plane: Plane;
  stats: LayerStats;
  scale: LayerScale;
  /** ties in a reduced block go to the index rarer in the whole plane (as the deep-zoom pyramid does) */
  priority: Uint8Array;
  /** opaque RGB colour of every palette index of the layer */
  table: Rgba[];
  legend: Legend;
}

export interface PreparedFigure {
  spec: FigureSpec;
  layout: FigureLayout;
  panels: PreparedPanel[];
}

function zodMessage(issues: readonly { path: PropertyKey[]; message: string }[]): string {
  return issues.map((i) => (i.path.length ? `${i.path.map(String).join('.')}: ${i.message}` : i.message)).join('; ');
}

/**
 * Validate the order, lay it out and fix each panel's colour scale.
 * @throws PrintInputError on a bad spec, a missing run, or any blocking layout warning
 */
export function prepareFigure(specInput: unknown, runs: readonly PrintRun[]): PreparedFigure {
  const parsed = figureSpecSchema.safeParse(specInput);
  if (!parsed.success) throw new PrintInputError(`bad figure spec: ${zodMessage(parsed.error.issues)}`);
  const spec = parsed.data;
  const layout = layoutFigure(
    spec,
    runs.map((r) => ({ runId: r.runId, shape: r.input.shape, origin: r.input.origin, chips: r.chips })),
  );
  const blocking = layout.warnings.filter((w) => w.blocking);
  if (blocking.length > 0) throw new PrintInputError(blocking.map((w) => w.message).join('; '));
  const byId = new Map(runs.map((r) => [r.runId, r]));
  const statsCache = new Map<string, LayerStats>();
  const panels = layout.panels.map((pl) => {
    const ps = spec.panels[pl.index];
    const run = byId.get(ps.runId)!;
    if (ps.layer === 'difference' && !run.background) throw new PrintInputError(`panel ${pl.index + 1}: the difference layer needs the background of run "${run.runId}"`);
    const plane = planeOf(run.input, { z: run.input.shape.length === 3 ? pl.zIndex : undefined, background: run.background });
    const key = `${run.runId}|${pl.zIndex}`;
    let stats = statsCache.get(key) ?? (run.stats && (ps.layer !== 'difference' || run.stats.minDifference !== undefined) ? run.stats : undefined);
    if (!stats) stats = computeStats(plane);
    statsCache.set(key, stats);
    const scale = layerScale(ps.layer, stats);
    // the same legend and colours the web proof derives from the run's stored statistics
    const { legend, table } = panelLegend(ps, stats);
    const priority = pl.reduction > 1 ? tiePriority(indexHistogram(plane, scale)) : new Uint8Array(256);
    return { spec: ps, layout: pl, plane, stats, scale, priority, table: [...table], legend };
  });
  return { spec, layout, panels };
}

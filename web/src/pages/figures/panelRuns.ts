import type { FigureRun } from '../../../../shared/api/figures.js';
import type { FigureSpec } from '../../../../shared/print-spec.js';
import { panelLabelText } from '../../../../shared/print-words.js';

export interface PanelRun {
  /** the panels drawn from this run, by their printed labels ("(a)", "(c)"), or "panel 2" where none is printed */
  panels: string[];
  run: FigureRun;
}

/**
 * The runs a figure's panels are drawn from, each once, in panel order, with the panels that show
 * it: a reader checks each run's certificate against the panel labels printed on the figure.
 */
export function panelRuns(
  spec: { labels: FigureSpec['labels']; panels: readonly Pick<FigureSpec['panels'][number], 'runId' | 'label'>[] },
  runs: readonly FigureRun[],
): PanelRun[] {
  const byId = new Map(runs.map((r) => [r.id, r]));
  const out = new Map<string, PanelRun>();
  spec.panels.forEach((p, i) => {
    const run = byId.get(p.runId);
    if (!run) return;
    const name = panelLabelText(i, spec.panels.length, spec.labels, p.label) ?? `panel ${i + 1}`;
    const entry = out.get(run.id);
    if (entry) entry.panels.push(name);
    else out.set(run.id, { panels: [name], run });
  });
  return [...out.values()];
}

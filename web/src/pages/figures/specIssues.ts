import { capitalized } from '../../labels.js';

/**
 * The composer's refused settings in the words of its own fields: the proof lists "Panel 1: region
 * needs …" and "Top margin: must be at least 0", never the schema's paths ("panels.0.region",
 * "margins.top"), which name nothing an author can find on the page.
 */

type Path = readonly PropertyKey[];

/** Panel fields under the labels the panel editor gives them. */
const PANEL_FIELDS: Record<string, string> = {
  runId: 'run',
  layer: 'layer',
  palette: 'palette',
  untoppled: 'untoppled sites',
  magnification: 'px per cell',
  label: 'label',
  z: 'slice',
};

const GRID_FIELDS: Record<string, string> = { rows: 'Grid rows', cols: 'Grid columns', gapMm: 'Gap between panels', sharedScale: 'Shared scale' };

/** Page-size fields as the size editor labels them (journal column, paper, or width × height). */
const SIZE_FIELDS: Record<string, string> = { heightMm: 'Height', width: 'Width', height: 'Height', unit: 'Unit', paper: 'Paper', orientation: 'Orientation', column: 'Column' };

const TOP_FIELDS: Record<string, string> = { dpi: 'DPI', labels: 'Panel labels', textPt: 'Text size', legend: 'Colour legend', scaleBar: 'Scale bar', panels: 'Panels' };

/** The field a schema path points at, as the composer labels it. */
export function fieldOfPath(path: Path): string {
  const [head, ...rest] = path.map((k) => (typeof k === 'symbol' ? k.description ?? '' : k));
  if (head === undefined) return 'Figure';
  if (head === 'panels' && typeof rest[0] === 'number') {
    const panel = `Panel ${rest[0] + 1}`;
    const [field, sub] = rest.slice(1);
    // the region's own check names the region in its message; a single bound is named by its field (xMin …)
    if (field === 'region') return typeof sub === 'string' ? `${panel} ${sub}` : panel;
    return typeof field === 'string' ? `${panel} ${PANEL_FIELDS[field] ?? field}` : panel;
  }
  if (head === 'grid') return typeof rest[0] === 'string' ? GRID_FIELDS[rest[0]] ?? 'Grid' : 'Grid';
  if (head === 'size') return typeof rest[0] === 'string' && SIZE_FIELDS[rest[0]] ? `Page ${SIZE_FIELDS[rest[0]]!.toLowerCase()}` : 'Page size';
  if (head === 'margins') return typeof rest[0] === 'string' ? `${capitalized(rest[0])} margin` : 'Margins';
  if (head === 'caption') return rest[0] === 'fontPt' ? 'Caption size' : 'Caption';
  return TOP_FIELDS[String(head)] ?? capitalized(String(head));
}

/** One line per refused setting, for the proof's "not valid yet" list. */
export function specIssueLines(issues: readonly { path: Path; message: string }[]): string[] {
  return issues.map((i) => `${fieldOfPath(i.path)}: ${i.message}`);
}

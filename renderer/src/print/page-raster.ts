import type { Rgba } from '../../../shared/palettes.js';
import type { PxRect } from '../../../shared/print-layout.js';
import { PanelRaster } from './panel-raster.js';
import { INK_LEVELS, inkLevelColour, MarkPainter, type MarkTarget } from './mark-raster.js';
import { figureMarks } from './marks.js';
import { INK, PAPER, type PreparedFigure } from './prepare.js';

/** Rows per strip: bounded memory (a strip of an A0 page at 600 DPI is ~1.3 MB of indices). */
export const STRIP_ROWS = 64;

/**
 * The page's colours: paper, ink (scale bars, text), the greys of anti-aliased text, every panel's
 * table and the legend's swatches, duplicates merged. A null `remap` means the page needs more
 * than 256 colours and is written as RGB.
 */
export interface PagePalette {
  colours: Rgba[];
  /** per panel: layer index → page index (only when indexed) */
  remap: Uint8Array[] | null;
  /** page index of each colour, keyed "r,g,b,a" */
  index: Map<string, number>;
  /** page index of ink coverage level q (1..INK_LEVELS), the greys of anti-aliased text */
  inkIndex: Uint8Array;
}

const keyOf = (c: Rgba) => c.join(',');

export function pagePalette(fig: PreparedFigure): PagePalette {
  const colours: Rgba[] = [];
  const index = new Map<string, number>();
  const add = (c: Rgba) => {
    const key = keyOf(c);
    let at = index.get(key);
    if (at === undefined) {
      at = colours.length;
      colours.push(c);
      index.set(key, at);
    }
    return at;
  };
  add(PAPER);
  add(INK);
  const marks = figureMarks(fig);
  const inkIndex = new Uint8Array(INK_LEVELS + 1);
  // greys only when there is text to anti-alias
  if (marks.some((m) => m.kind === 'text')) for (let q = 1; q <= INK_LEVELS; q++) inkIndex[q] = add(inkLevelColour(q));
  else inkIndex.fill(1);
  const remaps = fig.panels.map((p) => Uint16Array.from(p.table, add));
  for (const m of marks) if (m.kind !== 'text') add(m.colour);
  if (colours.length > 256) return { colours, remap: null, index, inkIndex };
  return { colours, remap: remaps.map((m) => Uint8Array.from(m)), index, inkIndex };
}

export interface PageStrip {
  /** first page row of the strip */
  y: number;
  rows: number;
  /** rows × width indices (indexed) or rows × width × 3 bytes (RGB) */
  data: Uint8Array;
}

function intersectRows(r: PxRect, y: number, rows: number): [number, number] | null {
  const a = Math.max(y, r.y);
  const b = Math.min(y + rows, r.y + r.height);
  return a < b ? [a, b] : null;
}

/**
 * The whole page, top to bottom, one strip at a time: paper, each panel's raster in its place, scale
 * bars in ink, then labels, legend and caption (mark-raster.ts). Memory: one strip of the page plus
 * one strip per panel, whatever the page size.
 */
export async function* pageStrips(fig: PreparedFigure, palette: PagePalette, stripRows = STRIP_ROWS): AsyncGenerator<PageStrip> {
  const { widthPx: W, heightPx: H } = fig.layout.page;
  const indexed = palette.remap !== null;
  const bpp = indexed ? 1 : 3;
  const rasters = fig.panels.map((p) => new PanelRaster(p));
  const panelBufs = rasters.map((r) => new Uint8Array(r.width * stripRows));
  const bars = fig.panels.flatMap((p) => (p.layout.scaleBar ? [p.layout.scaleBar.bar] : []));
  const rgbTables = fig.panels.map((p) => p.table);
  const buf = new Uint8Array(W * stripRows * bpp);
  const painter = new MarkPainter(figureMarks(fig), fig.layout.dpi, W);
  const target: MarkTarget = indexed ? { indexOf: (c) => palette.index.get(keyOf(c))!, inkIndex: palette.inkIndex, paperIndex: 0 } : {};
  for (let y = 0; y < H; y += stripRows) {
    const rows = Math.min(stripRows, H - y);
    const data = buf.subarray(0, W * rows * bpp);
    data.fill(indexed ? 0 : 255);
    fig.panels.forEach((p, pi) => {
      const img = p.layout.image;
      const span = intersectRows(img, y, rows);
      if (!span) return;
      const [a, b] = span;
      const idx = rasters[pi].rows(a - img.y, b - a, panelBufs[pi]);
      const x0 = Math.max(0, img.x);
      const x1 = Math.min(W, img.x + img.width);
      for (let py = a; py < b; py++) {
        const src = (py - a) * img.width - img.x;
        const dst = (py - y) * W;
        if (indexed) {
          const map = palette.remap![pi];
          for (let x = x0; x < x1; x++) data[dst + x] = map[idx[src + x]];
        } else {
          const t = rgbTables[pi];
          for (let x = x0; x < x1; x++) {
            const c = t[idx[src + x]];
            const o = (dst + x) * 3;
            data[o] = c[0];
            data[o + 1] = c[1];
            data[o + 2] = c[2];
          }
        }
      }
    });
    for (const bar of bars) {
      const span = intersectRows(bar, y, rows);
      if (!span) continue;
      const x0 = Math.max(0, bar.x);
      const x1 = Math.min(W, bar.x + bar.width);
      for (let py = span[0]; py < span[1]; py++) {
        const dst = (py - y) * W;
        if (indexed) data.fill(1, dst + x0, dst + x1);
        else data.fill(0, (dst + x0) * 3, (dst + x1) * 3);
      }
    }
    if (!painter.empty) await painter.paint(y, rows, data, target);
    yield { y, rows, data };
  }
}

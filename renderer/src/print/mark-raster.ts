import sharp from 'sharp';
import type { Rgba } from '../../../shared/palettes.js';
import { POINTS_PER_INCH } from '../../../shared/print-page.js';
import { layoutLine, workSansFaces, type FontFace } from './fonts.js';
import type { Mark } from './marks.js';

/**
 * Paints the figure's marks (marks.ts) into page strips for the PNG and TIFF: rectangles as whole
 * pixels of their exact colour; text as the Work Sans glyph outlines (fontkit), rasterized with
 * anti-aliasing by libvips/librsvg through sharp, only for the rows of the strip at hand, so no
 * page-sized buffer is ever made. Text is ink on paper; its coverage is kept to INK_LEVELS steps so
 * an indexed page needs only a few extra palette entries.
 */

/** Coverage steps of anti-aliased ink: level q of INK_LEVELS is ink at q / INK_LEVELS over paper. */
export const INK_LEVELS = 15;

/** The grey of coverage level q (1 ≤ q ≤ INK_LEVELS) over white paper. */
export function inkLevelColour(q: number): Rgba {
  const v = Math.round(255 * (1 - q / INK_LEVELS));
  return [v, v, v, 255];
}

export interface MarkTarget {
  /** page index of an exact colour (indexed pages), undefined when the page is RGB */
  indexOf?: (c: Rgba) => number;
  /** page index of ink coverage level q, 1..INK_LEVELS (indexed pages) */
  inkIndex?: Uint8Array;
  /** page index of paper (indexed pages) */
  paperIndex?: number;
}

interface PxBox {
  x0: number;
  x1: number;
  y0: number;
  y1: number;
  colour: Rgba;
}

interface TextLine {
  /** generous ink extent, page pixels */
  x0: number;
  x1: number;
  y0: number;
  y1: number;
  /** SVG path elements in page-pixel coordinates */
  svg: string;
}

const glyphPaths = new Map<string, string>();

function glyphPath(face: FontFace, id: number, svg: () => string): string {
  const key = `${face}:${id}`;
  let d = glyphPaths.get(key);
  if (d === undefined) {
    d = svg();
    glyphPaths.set(key, d);
  }
  return d;
}

const num = (v: number) => Number(v.toFixed(4)).toString();

export class MarkPainter {
  private readonly boxes: PxBox[] = [];
  private readonly lines: TextLine[] = [];

  constructor(
    marks: readonly Mark[],
    dpi: number,
    private readonly pageWidth: number,
  ) {
    const s = dpi / POINTS_PER_INCH; // page pixels per point
    const faces = workSansFaces();
    for (const m of marks) {
      if (m.kind === 'fill') {
        this.box(m.x * s, m.y * s, (m.x + m.width) * s, (m.y + m.height) * s, m.colour);
      } else if (m.kind === 'stroke') {
        // an outline centred on the rectangle's edges, at least one pixel thick
        const t = Math.max(1, Math.round(m.lineWidthPt * s));
        const x0 = Math.round(m.x * s - t / 2);
        const y0 = Math.round(m.y * s - t / 2);
        const x1 = Math.max(x0 + 2 * t, Math.round((m.x + m.width) * s + t / 2));
        const y1 = Math.max(y0 + 2 * t, Math.round((m.y + m.height) * s + t / 2));
        this.boxes.push({ x0, x1, y0, y1: y0 + t, colour: m.colour }, { x0, x1, y0: y1 - t, y1, colour: m.colour });
        this.boxes.push({ x0, x1: x0 + t, y0, y1, colour: m.colour }, { x0: x1 - t, x1, y0, y1, colour: m.colour });
      } else if (m.text.length > 0) {
        const font = faces[m.face];
        const sizePx = m.sizePt * s;
        const e = sizePx / font.unitsPerEm;
        // pdfkit's rule: the baseline sits one ascent below the top of the line box
        const baseline = m.y * s + font.ascent * e;
        const run = layoutLine(m.face, m.text);
        let pen = m.x * s;
        const parts: string[] = [];
        run.glyphs.forEach((g, i) => {
          const pos = run.positions[i];
          const d = glyphPath(m.face, g.id, () => g.path.toSVG());
          if (d.length > 0) parts.push(`<path transform="matrix(${num(e)} 0 0 ${num(-e)} ${num(pen + pos.xOffset * e)} ${num(baseline - pos.yOffset * e)})" d="${d}"/>`);
          pen += pos.xAdvance * e;
        });
        const bb = font.bbox;
        this.lines.push({
          x0: Math.floor(m.x * s + Math.min(0, bb.minX) * e) - 1,
          x1: Math.ceil(pen + Math.max(0, bb.maxX) * e) + 1,
          y0: Math.floor(baseline - bb.maxY * e) - 1,
          y1: Math.ceil(baseline - bb.minY * e) + 1,
          svg: parts.join(''),
        });
      }
    }
  }

  private box(x0: number, y0: number, x1: number, y1: number, colour: Rgba): void {
    const a = Math.round(x0);
    const b = Math.round(y0);
    this.boxes.push({ x0: a, y0: b, x1: Math.max(a + 1, Math.round(x1)), y1: Math.max(b + 1, Math.round(y1)), colour });
  }

  get empty(): boolean {
    return this.boxes.length === 0 && this.lines.length === 0;
  }

  /**
   * Paint rows [y, y + rows) of the page: `data` holds rows × width bytes (indexed, with `target`'s
   * indices) or rows × width × 3 (RGB).
   */
  async paint(y: number, rows: number, data: Uint8Array, target: MarkTarget): Promise<void> {
    const W = this.pageWidth;
    const indexed = target.indexOf !== undefined;
    for (const b of this.boxes) {
      const r0 = Math.max(y, b.y0);
      const r1 = Math.min(y + rows, b.y1);
      const x0 = Math.max(0, b.x0);
      const x1 = Math.min(W, b.x1);
      if (r0 >= r1 || x0 >= x1) continue;
      const idx = indexed ? target.indexOf!(b.colour) : 0;
      for (let r = r0; r < r1; r++) {
        const o = (r - y) * W;
        if (indexed) data.fill(idx, o + x0, o + x1);
        else for (let x = x0; x < x1; x++) data.set([b.colour[0], b.colour[1], b.colour[2]], (o + x) * 3);
      }
    }
    const hit = this.lines.filter((l) => l.y0 < y + rows && l.y1 > y && l.x0 < W && l.x1 > 0);
    if (hit.length === 0) return;
    const x0 = Math.max(0, Math.min(...hit.map((l) => l.x0)));
    const x1 = Math.min(W, Math.max(...hit.map((l) => l.x1)));
    const w = x1 - x0;
    const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${w}" height="${rows}" viewBox="${x0} ${y} ${w} ${rows}"><g fill="#000">${hit.map((l) => l.svg).join('')}</g></svg>`;
    // density 72: one SVG user unit is one page pixel
    const { data: cover, info } = await sharp(Buffer.from(svg), { density: 72, limitInputPixels: false }).ensureAlpha().extractChannel(3).raw().toBuffer({ resolveWithObject: true });
    if (info.width !== w || info.height !== rows) throw new Error(`text strip rendered at ${info.width} × ${info.height} px instead of ${w} × ${rows}`);
    const half = INK_LEVELS / 2;
    for (let r = 0; r < rows; r++) {
      const src = r * w;
      const dst = r * W + x0;
      for (let c = 0; c < w; c++) {
        const a = cover[src + c];
        if (a === 0) continue;
        const q = Math.round((a * INK_LEVELS) / 255);
        if (indexed) {
          if (q === 0) continue;
          // over paper the exact grey; over a colour (never planned, but a long label could touch one) ink or nothing
          if (data[dst + c] === target.paperIndex) data[dst + c] = target.inkIndex![q];
          else if (q >= half) data[dst + c] = target.inkIndex![INK_LEVELS];
        } else {
          const o = (dst + c) * 3;
          const keep = 255 - a;
          data[o] = Math.round((data[o] * keep) / 255);
          data[o + 1] = Math.round((data[o + 1] * keep) / 255);
          data[o + 2] = Math.round((data[o + 2] * keep) / 255);
        }
      }
    }
  }
}

import { once } from 'node:events';
import type { Writable } from 'node:stream';
import { finished } from 'node:stream/promises';
import { createDeflate } from 'node:zlib';
import PDFDocument from 'pdfkit';
import { rgbaToHex, type Legend, type Rgba } from '../../../shared/palettes.js';
import { legendRowPx, POINTS_PER_INCH } from '../../../shared/print.js';
import { writeStreamAtomically, type WrittenFile } from './file-output.js';
import { workSans } from './fonts.js';
import { PanelRaster } from './panel-raster.js';
import { DEFAULT_PNG_LEVEL } from './png.js';
import { STRIP_ROWS } from './page-raster.js';
import type { PreparedFigure, PreparedPanel } from './prepare.js';

/**
 * The figure as a one-page PDF (ISO 32000): MediaBox exactly the ordered size in points
 * (mm / 25.4 × 72), each panel's raster as an indexed image XObject placed at exactly
 * pixels × 72 / dpi points, and labels, scale bars, legend and caption as real text in Work Sans
 * (embedded subset, with a ToUnicode map so the text can be selected and extracted).
 */

export interface PdfOptions {
  title?: string;
  /** fixed creation date, for reproducible files */
  creationDate?: Date;
}

type Doc = InstanceType<typeof PDFDocument>;
interface RefLike {
  write(chunk: Uint8Array): void;
  end(chunk?: Uint8Array): void;
  data: Record<string, unknown>;
}

/**
 * One panel as an image XObject: rows are deflated as they are produced, so the panel exists in
 * memory only in compressed form (pdfkit writes a stream object in one piece when it is ended).
 */
async function embedPanel(doc: Doc, panel: PreparedPanel, name: string): Promise<void> {
  const raster = new PanelRaster(panel);
  const { width, height } = raster;
  const lookup = Buffer.alloc(panel.table.length * 3);
  panel.table.forEach((c, i) => lookup.set([c[0], c[1], c[2]], i * 3));
  const lut = doc.ref({}) as unknown as RefLike;
  lut.end(lookup);
  const img = doc.ref({
    Type: 'XObject',
    Subtype: 'Image',
    Width: width,
    Height: height,
    BitsPerComponent: 8,
    ColorSpace: ['Indexed', 'DeviceRGB', panel.table.length - 1, lut],
    Filter: 'FlateDecode',
  }) as unknown as RefLike;
  const deflate = createDeflate({ level: DEFAULT_PNG_LEVEL, chunkSize: 1 << 17 });
  deflate.on('data', (chunk: Buffer) => img.write(chunk));
  const done = once(deflate, 'end');
  const buf = new Uint8Array(width * STRIP_ROWS);
  for (let y = 0; y < height; y += STRIP_ROWS) {
    const rows = Math.min(STRIP_ROWS, height - y);
    const strip = raster.rows(y, rows, buf);
    if (!deflate.write(Buffer.from(strip.subarray(0, rows * width)))) await once(deflate, 'drain');
  }
  deflate.end();
  await done;
  img.end();
  (doc.page as unknown as { xobjects: Record<string, unknown> }).xobjects[name] = img;
}

function fill(doc: Doc, c: Rgba | string): Doc {
  return doc.fillColor(typeof c === 'string' ? c : rgbaToHex(c));
}

function drawLegend(doc: Doc, legend: Legend, table: readonly Rgba[], title: string, x: number, y: number, width: number, line: number, textPt: number): void {
  const sw = textPt * 0.9;
  doc.font('WorkSans-Bold').fontSize(textPt);
  fill(doc, '#000000').text(title, x, y, { lineBreak: false });
  const y1 = y + line;
  doc.font('WorkSans').fontSize(textPt);
  if (legend.kind === 'discrete' && legend.entries.length <= 32) {
    let cx = x;
    for (const e of legend.entries) {
      const w = sw + textPt * 0.3 + doc.widthOfString(e.label) + textPt * 0.9;
      if (cx + w > x + width) break;
      if (e.transparent) doc.rect(cx, y1, sw, sw).lineWidth(0.3).stroke('#000000');
      else {
        fill(doc, e.colour).rect(cx, y1, sw, sw).fill();
        doc.rect(cx, y1, sw, sw).lineWidth(0.2).stroke('#000000');
      }
      fill(doc, '#000000').text(e.label, cx + sw + textPt * 0.3, y1, { lineBreak: false });
      cx += w;
    }
    return;
  }
  // a ramp: thin rectangles along the bar, labelled stops on the line below
  const stops = legend.kind === 'continuous' ? legend.stops : legend.entries.map((e, i, a) => ({ ...e, position: a.length > 1 ? i / (a.length - 1) : 0 }));
  const barW = Math.min(width * 0.6, 120 * (POINTS_PER_INCH / 25.4));
  const steps = 128;
  // the layer's own colour table: index 1 + t · (count − 2) is what a cell at position t is drawn with
  for (let i = 0; i < steps; i++) {
    const t = (i + 0.5) / steps;
    fill(doc, table[1 + Math.round(t * (table.length - 2))]).rect(x + (i * barW) / steps, y1, barW / steps + 0.05, sw).fill();
  }
  doc.rect(x, y1, barW, sw).lineWidth(0.2).stroke('#000000');
  fill(doc, '#000000');
  // labels that would overlap are dropped, but never the two ends of the scale
  const placed = stops.map((s) => {
    const lw = doc.widthOfString(s.label);
    const lx = Math.min(x + barW - lw, Math.max(x, x + s.position * barW - lw / 2));
    return { label: s.label, lx, end: lx + lw };
  });
  const last = placed[placed.length - 1];
  let lastEnd = -Infinity;
  for (const [i, l] of placed.entries()) {
    const isEnd = i === 0 || i === placed.length - 1;
    if (!isEnd && (l.lx < lastEnd + textPt * 0.4 || l.end + textPt * 0.4 > last.lx)) continue;
    doc.text(l.label, l.lx, y1 + line, { lineBreak: false });
    lastEnd = l.end;
  }
  if (legend.kind === 'continuous' && legend.masked) {
    const mx = x + barW + textPt * 1.5;
    if (legend.masked.transparent) doc.rect(mx, y1, sw, sw).lineWidth(0.3).stroke('#000000');
    else {
      fill(doc, legend.masked.colour).rect(mx, y1, sw, sw).fill();
      doc.rect(mx, y1, sw, sw).lineWidth(0.2).stroke('#000000');
    }
    fill(doc, '#000000').text(legend.masked.label, mx + sw + textPt * 0.3, y1, { lineBreak: false });
  }
}

/** Build the PDF into `out` (a writable stream, ended when done). */
export async function renderFigurePdf(fig: PreparedFigure, out: Writable, opts: PdfOptions = {}): Promise<void> {
  const { layout } = fig;
  const doc = new PDFDocument({
    size: [layout.page.widthPt, layout.page.heightPt],
    margin: 0,
    compress: true,
    pdfVersion: '1.7',
    info: { Title: opts.title ?? layout.caption?.text.split('\n')[0] ?? 'Toppleworks figure', Creator: 'Toppleworks print engine', CreationDate: opts.creationDate ?? new Date() },
  });
  doc.pipe(out);
  try {
    await drawFigure(doc, fig);
  } catch (err) {
    // stop pdfkit writing into a stream the caller is about to discard
    doc.unpipe(out);
    throw err;
  }
  doc.end();
  await finished(out);
}

async function drawFigure(doc: Doc, fig: PreparedFigure): Promise<void> {
  const { layout } = fig;
  const k = POINTS_PER_INCH / layout.dpi; // points per page pixel
  const fonts = workSans();
  doc.registerFont('WorkSans', fonts.regular);
  doc.registerFont('WorkSans-Bold', fonts.bold);
  const textPt = layout.textPt;

  for (const [i, p] of fig.panels.entries()) {
    const name = `Panel${i + 1}`;
    await embedPanel(doc, p, name);
    const r = p.layout.image;
    doc.save();
    doc.transform(r.width * k, 0, 0, -r.height * k, r.x * k, (r.y + r.height) * k);
    doc.addContent(`/${name} Do`);
    doc.restore();
    if (p.layout.label !== null && p.layout.labelAt) {
      doc.font('WorkSans-Bold').fontSize(textPt);
      fill(doc, '#000000').text(p.layout.label, p.layout.labelAt.x * k, p.layout.labelAt.y * k, { lineBreak: false });
    }
    const bar = p.layout.scaleBar;
    if (bar) {
      fill(doc, '#000000').rect(bar.bar.x * k, bar.bar.y * k, bar.bar.width * k, bar.bar.height * k).fill();
      doc.font('WorkSans').fontSize(textPt);
      doc.text(bar.text, bar.textAt.x * k, bar.textAt.y * k, { lineBreak: false });
    }
  }

  if (layout.legend) {
    const line = textPt * 1.25;
    const rowPt = legendRowPx(textPt, layout.dpi) * k;
    const groups = new Map<string, { legend: Legend; table: readonly Rgba[]; labels: string[] }>();
    // panels whose legends are identical share one row (the layout reserved a row per run and style)
    for (const p of fig.panels) {
      const content = JSON.stringify(p.legend);
      const g = groups.get(content) ?? { legend: p.legend, table: p.table, labels: [] };
      if (p.layout.label) g.labels.push(p.layout.label);
      groups.set(content, g);
    }
    let y = layout.legend.y * k;
    for (const g of groups.values()) {
      const title = g.labels.length > 0 && g.labels.length < fig.panels.length ? `${g.labels.join(', ')} ${g.legend.title}` : g.legend.title;
      drawLegend(doc, g.legend, g.table, title.charAt(0).toUpperCase() + title.slice(1), layout.legend.x * k, y, layout.legend.width * k, line, textPt);
      y += rowPt;
    }
  }

  if (layout.caption) {
    const c = layout.caption;
    doc.font('WorkSans').fontSize(c.fontPt);
    const gap = Math.max(0, c.fontPt * 1.25 - doc.currentLineHeight());
    // the height bound keeps pdfkit from ever starting a second page
    fill(doc, '#000000').text(c.text, c.x * k, c.y * k, { width: c.width * k, height: Math.max(c.height * k, c.fontPt * 1.3), lineGap: gap, ellipsis: true });
  }
}

/** Write the PDF file all or nothing. */
export function writeFigurePdf(fig: PreparedFigure, path: string, opts: PdfOptions = {}): Promise<WrittenFile> {
  return writeStreamAtomically(path, (out) => renderFigurePdf(fig, out, opts));
}

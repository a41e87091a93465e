import { once } from 'node:events';
import type { Writable } from 'node:stream';
import { finished } from 'node:stream/promises';
import { createDeflate } from 'node:zlib';
import PDFDocument from 'pdfkit';
import { rgbaToHex, type Rgba } from '../../../shared/palettes.js';
import { POINTS_PER_INCH } from '../../../shared/print-page.js';
import { writeStreamAtomically, type WrittenFile } from './file-output.js';
import { workSans, type FontFace } from './fonts.js';
import { figureMarks, type Mark } from './marks.js';
import { PanelRaster } from './panel-raster.js';
import { DEFAULT_PNG_LEVEL } from './png.js';
import { STRIP_ROWS } from './page-raster.js';
import { INK, type PreparedFigure, type PreparedPanel } from './prepare.js';

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

const FONT_NAMES: Record<FontFace, string> = { regular: 'WorkSans', bold: 'WorkSans-Bold' };

/** Labels, scale-bar numbers, legend and caption: the figure's marks (marks.ts) as vector text and paths. */
function drawMarks(doc: Doc, marks: readonly Mark[]): void {
  for (const m of marks) {
    if (m.kind === 'text') {
      if (m.text.length === 0) continue;
      doc.font(FONT_NAMES[m.face]).fontSize(m.sizePt);
      fill(doc, INK).text(m.text, m.x, m.y, { lineBreak: false });
    } else if (m.kind === 'fill') {
      fill(doc, m.colour).rect(m.x, m.y, m.width, m.height).fill();
    } else {
      doc.rect(m.x, m.y, m.width, m.height).lineWidth(m.lineWidthPt).stroke(rgbaToHex(m.colour));
    }
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

  for (const [i, p] of fig.panels.entries()) {
    const name = `Panel${i + 1}`;
    await embedPanel(doc, p, name);
    const r = p.layout.image;
    doc.save();
    doc.transform(r.width * k, 0, 0, -r.height * k, r.x * k, (r.y + r.height) * k);
    doc.addContent(`/${name} Do`);
    doc.restore();
    const bar = p.layout.scaleBar;
    if (bar) fill(doc, INK).rect(bar.bar.x * k, bar.bar.y * k, bar.bar.width * k, bar.bar.height * k).fill();
  }
  drawMarks(doc, figureMarks(fig));
}

/** Write the PDF file all or nothing. */
export function writeFigurePdf(fig: PreparedFigure, path: string, opts: PdfOptions = {}): Promise<WrittenFile> {
  return writeStreamAtomically(path, (out) => renderFigurePdf(fig, out, opts));
}

import { useEffect, useRef, useState, type ChangeEvent } from 'react';
import { Bar, BarChart, CartesianGrid, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { readNpy } from '../../../renderer/src/npy/read.js';
import { heightColour, paletteById, sampleRamp } from '../../../shared/palettes.js';
import { useUpload, useUploadBackground } from '../api/queries.js';
import type { BackgroundUpload as Upload } from '../api/contract.js';
import { groupThousands } from '../format.js';
import { FormError } from '../ui/index.js';

/** Longest side of the picture drawn from the chosen file. */
const PREVIEW_SIDE = 192;

/**
 * Draw a 2-D (or the middle slice of a 3-D, or a 1-D) height array in the print palette's greys,
 * sampled down to PREVIEW_SIDE so a big array previews instantly. Pure apart from the canvas.
 */
function drawHeights(canvas: HTMLCanvasElement, data: ArrayLike<number | bigint>, shape: number[]) {
  const w = shape[shape.length - 1]!;
  const h = shape.length >= 2 ? shape[shape.length - 2]! : 1;
  const z0 = shape.length === 3 ? Math.floor(shape[0]! / 2) * w * h : 0;
  const step = Math.max(1, Math.ceil(Math.max(w, h) / PREVIEW_SIDE));
  const cw = Math.ceil(w / step);
  const ch = Math.ceil(h / step);
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < w * h; i += 1) {
    const v = Number(data[z0 + i]!);
    if (v < min) min = v;
    if (v > max) max = v;
  }
  canvas.width = cw;
  canvas.height = ch;
  const ctx = canvas.getContext('2d')!;
  const img = ctx.createImageData(cw, ch);
  // the default palette's own height colours, so the preview looks like the run will
  const palette = paletteById('tidewater');
  for (let y = 0; y < ch; y++)
    for (let x = 0; x < cw; x++) {
      const v = Number(data[z0 + y * step * w + x * step]!);
      const c = v >= 0 && v <= 254 ? heightColour(palette, v, max) : sampleRamp(palette.ramp, max > min ? (v - min) / (max - min) : 0);
      img.data.set(c, (y * cw + x) * 4);
    }
  ctx.putImageData(img, 0, 0);
}

/**
 * Choose a .npy or PNG file, see it drawn and summarised, and only then use it: the file goes to
 * POST /api/uploads/background, which stores it by content hash and answers its shape and height counts.
 */
export function BackgroundUpload({ labId, chosen, onChosen }: { labId: string; chosen: { sha256: string; shape: number[] } | null; onChosen: (u: Upload | null) => void }) {
  const upload = useUploadBackground(labId);
  const known = useUpload(chosen?.sha256 ?? null);
  const canvas = useRef<HTMLCanvasElement>(null);
  const [picture, setPicture] = useState<{ kind: 'png'; url: string } | { kind: 'npy' } | null>(null);
  const [localError, setLocalError] = useState<string | null>(null);
  const summary = upload.data?.upload ?? known.data?.upload ?? null;

  useEffect(() => () => (picture?.kind === 'png' ? URL.revokeObjectURL(picture.url) : undefined), [picture]);

  async function choose(e: ChangeEvent<HTMLInputElement>) {
    const file = e.target.files?.[0];
    e.target.value = '';
    if (!file) return;
    setLocalError(null);
    onChosen(null);
    if (file.name.toLowerCase().endsWith('.png')) {
      setPicture({ kind: 'png', url: URL.createObjectURL(file) });
    } else {
      try {
        const arr = readNpy(new Uint8Array(await file.arrayBuffer()));
        setPicture({ kind: 'npy' });
        requestAnimationFrame(() => canvas.current && drawHeights(canvas.current, arr.data as ArrayLike<number | bigint>, arr.shape));
      } catch (err) {
        setPicture(null);
        setLocalError(`${file.name}: ${(err as Error).message}`);
        return;
      }
    }
    upload.mutate(file, { onSuccess: (r) => onChosen(r.upload) });
  }

  const counts = summary ? summary.preview.heightCounts.map((c, h) => ({ h: String(h), cells: c })) : [];
  return (
    <div className="col-span-3 rounded-lg border border-rule-soft bg-paper/60 p-4" data-testid="background-upload">
      <label className="flex flex-col gap-1 text-sm">
        <span className="font-medium">Background array (.npy of integers, or a PNG whose grey levels become heights 0, 1, 2, …)</span>
        <input type="file" accept=".npy,image/png" onChange={(e) => void choose(e)} aria-label="background file" className="text-xs" />
      </label>
      {localError ? <p role="alert" className="mt-2 text-xs font-medium text-stamp">{localError}</p> : null}
      {upload.isError ? <div className="mt-2"><FormError error={upload.error} /></div> : null}
      {upload.isPending ? <p className="mt-2 text-xs text-ink-soft">Uploading and checking…</p> : null}
      <div className="mt-3 flex gap-6">
        {picture?.kind === 'png' ? <img src={picture.url} alt="chosen background" className="h-40 w-40 border border-rule object-contain [image-rendering:pixelated]" /> : null}
        {picture?.kind === 'npy' ? <canvas ref={canvas} aria-label="chosen background" className="h-40 w-40 border border-rule object-contain [image-rendering:pixelated]" /> : null}
        {summary ? (
          <div className="flex-1 text-sm">
            <p>
              <span className="tnum">{summary.shape.map((d) => groupThousands(d)).join(' × ')}</span> cells · heights {summary.min} to {summary.max} · mean {summary.mean.toFixed(3)}
              {summary.levels ? ` · grey levels ${summary.levels.join(', ')}` : ''}
            </p>
            <p className="mt-0.5 font-mono text-[11px] text-ink-faint">sha256 {summary.sha256}</p>
            <div className="mt-2 h-32">
              <ResponsiveContainer width="100%" height="100%">
                <BarChart data={counts} margin={{ top: 4, right: 8, bottom: 0, left: 8 }}>
                  <CartesianGrid stroke="#ebe5d8" vertical={false} />
                  <XAxis dataKey="h" tick={{ fontSize: 11 }} label={{ value: 'height', position: 'insideBottomRight', offset: -2, fontSize: 11 }} />
                  <YAxis tick={{ fontSize: 11 }} tickFormatter={(v: number) => groupThousands(v)} width={56} />
                  <Tooltip formatter={(v) => [`${groupThousands(Number(v))} cells`, 'count']} />
                  <Bar dataKey="cells" fill="#1e4a6e" isAnimationActive={false} />
                </BarChart>
              </ResponsiveContainer>
            </div>
            {summary.preview.countAbove ? <p className="text-xs text-ink-soft">{groupThousands(summary.preview.countAbove)} cells above 255</p> : null}
          </div>
        ) : null}
      </div>
    </div>
  );
}

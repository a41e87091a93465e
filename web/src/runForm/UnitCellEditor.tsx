import { useMemo, useState, type ChangeEvent } from 'react';
import { periodicGraphSchema, type PeriodicGraph } from '../api/contract.js';
import { periodicLattice } from '../../../renderer/src/engine/lattice.js';
import { resizeCell, toggleOffset } from './formState.js';

/** Offsets drawn in the editor: every [dx, dy] with |dx|, |dy| ≤ REACH. Longer edges come by JSON upload. */
const REACH = 2;
const MAX_EDIT_PERIOD = 8;

/** Checked by the engine's own validator (renderer/src/engine/lattice.ts), so the form says what a run would say. */
export function checkCell(g: PeriodicGraph): { ok: true; symmetric: boolean; degrees: number[] } | { ok: false; message: string } {
  try {
    const lattice = periodicLattice(g);
    return { ok: true, symmetric: lattice.symmetric, degrees: lattice.classes.map((c) => c.length) };
  } catch (e) {
    return { ok: false, message: (e as Error).message };
  }
}

/**
 * The unit cell of a periodic graph on Z²: pick a residue class (x mod px, y mod py), then toggle its
 * outgoing offsets on a small grid around the site. Shows at once whether every edge has its return edge.
 */
export function UnitCellEditor({ value, onChange, name, onName }: { value: PeriodicGraph; onChange: (g: PeriodicGraph) => void; name: string; onName: (s: string) => void }) {
  const [px, py] = value.period;
  const [sel, setSel] = useState<[number, number]>([0, 0]);
  const [uploadError, setUploadError] = useState<string | null>(null);
  const check = useMemo(() => checkCell(value), [value]);
  const cx = Math.min(sel[0], px - 1);
  const cy = Math.min(sel[1], py - 1);
  const offsets = value.neighbours[cy]?.[cx] ?? [];
  const range = Array.from({ length: 2 * REACH + 1 }, (_, i) => i - REACH);

  async function upload(e: ChangeEvent<HTMLInputElement>) {
    const file = e.target.files?.[0];
    e.target.value = '';
    if (!file) return;
    try {
      const json = JSON.parse(await file.text()) as Record<string, unknown>;
      const { name: fileName, ...graph } = json;
      const parsed = periodicGraphSchema.safeParse(graph);
      if (!parsed.success) throw new Error(`${parsed.error.issues[0]?.path.join('.') || 'graph'}: ${parsed.error.issues[0]?.message}`);
      const c = checkCell(parsed.data);
      if (!c.ok) throw new Error(c.message);
      setUploadError(null);
      onChange(parsed.data);
      if (typeof fileName === 'string') onName(fileName);
    } catch (err) {
      setUploadError(`${file.name}: ${(err as Error).message}`);
    }
  }

  return (
    <div className="rounded-lg border border-rule-soft bg-paper/60 p-4" data-testid="unit-cell-editor">
      <div className="flex flex-wrap items-end gap-4 text-sm">
        <label className="flex flex-col gap-1">
          <span className="font-medium">Period in x</span>
          <input type="number" min={1} max={MAX_EDIT_PERIOD} value={px} onChange={(e) => onChange(resizeCell(value, clamp(e.target.valueAsNumber), py))} className="w-20 rounded-md border border-rule bg-sheet px-2 py-1" />
        </label>
        <label className="flex flex-col gap-1">
          <span className="font-medium">Period in y</span>
          <input type="number" min={1} max={MAX_EDIT_PERIOD} value={py} onChange={(e) => onChange(resizeCell(value, px, clamp(e.target.valueAsNumber)))} className="w-20 rounded-md border border-rule bg-sheet px-2 py-1" />
        </label>
        <label className="flex flex-col gap-1">
          <span className="font-medium">Name (optional)</span>
          <input value={name} onChange={(e) => onName(e.target.value)} placeholder="e.g. brick wall" className="w-48 rounded-md border border-rule bg-sheet px-2 py-1" />
        </label>
        <label className="ml-auto flex flex-col gap-1">
          <span className="font-medium">…or upload its JSON</span>
          <input type="file" accept="application/json,.json" onChange={(e) => void upload(e)} aria-label="periodic graph JSON" className="text-xs" />
        </label>
      </div>
      {uploadError ? <p role="alert" className="mt-2 text-xs font-medium text-stamp">{uploadError}</p> : null}
      <div className="mt-4 grid grid-cols-[auto_auto_1fr] items-start gap-6">
        <div>
          <p className="mb-1.5 text-xs text-ink-soft">Residue classes (x mod {px}, y mod {py})</p>
          <div className="grid gap-1" style={{ gridTemplateColumns: `repeat(${px}, 2.75rem)` }}>
            {value.neighbours.map((row, y) =>
              row.map((offs, x) => (
                <button
                  key={`${x},${y}`}
                  type="button"
                  onClick={() => setSel([x, y])}
                  aria-pressed={x === cx && y === cy}
                  title={`class x ≡ ${x}, y ≡ ${y}: ${offs.length} outgoing edges`}
                  className={`h-11 rounded border font-mono text-[11px] ${x === cx && y === cy ? 'border-press bg-press text-sheet' : 'border-rule bg-sheet text-ink hover:border-press'}`}
                >
                  {x},{y}
                  <span className="block text-[10px] opacity-70">deg {offs.length}</span>
                </button>
              )),
            )}
          </div>
        </div>
        <div>
          <p className="mb-1.5 text-xs text-ink-soft">
            Outgoing offsets of class <span className="font-mono">({cx}, {cy})</span>
          </p>
          <div className="grid gap-0.5" style={{ gridTemplateColumns: `repeat(${range.length}, 1.9rem)` }} role="group" aria-label="outgoing offsets">
            {range.map((dy) =>
              range.map((dx) => {
                const centre = dx === 0 && dy === 0;
                const on = offsets.some(([a, b]) => a === dx && b === dy);
                return (
                  <button
                    key={`${dx},${dy}`}
                    type="button"
                    disabled={centre}
                    aria-pressed={centre ? undefined : on}
                    aria-label={centre ? 'the site itself' : `offset (${dx}, ${dy})`}
                    onClick={() => onChange(toggleOffset(value, cx, cy, dx, dy))}
                    className={`h-[1.9rem] rounded-sm border text-[10px] ${centre ? 'border-ink bg-ink text-sheet' : on ? 'border-stamp bg-stamp text-sheet' : 'border-rule-soft bg-sheet text-ink-faint hover:border-stamp'}`}
                  >
                    {centre ? '•' : on ? '●' : ''}
                  </button>
                );
              }),
            )}
          </div>
          <p className="mt-1 text-[11px] text-ink-faint">x to the right, y downward (array order)</p>
        </div>
        <div className="text-sm" aria-live="polite" data-testid="cell-check">
          {check.ok ? (
            <>
              <p className={check.symmetric ? 'font-medium text-leaf' : 'font-medium text-amber'}>
                {check.symmetric ? 'Symmetric: every edge has its return edge (an undirected graph).' : 'Directed: some edge has no return edge.'}
              </p>
              <p className="mt-1 text-ink-soft">
                Degrees {[...new Set(check.degrees)].sort((a, b) => a - b).join(', ')}; a site topples when it holds at least its degree.
              </p>
            </>
          ) : (
            <p role="alert" className="font-medium text-stamp">{check.message}</p>
          )}
        </div>
      </div>
    </div>
  );
}

const clamp = (n: number) => (Number.isInteger(n) ? Math.max(1, Math.min(MAX_EDIT_PERIOD, n)) : 1);

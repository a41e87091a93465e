import type { ReactNode } from 'react';
import { runStatsFromJSON, type RunStatsJson } from '../../../shared/run-stats.js';
import { formatElapsed, groupThousands } from '../format.js';
import { Count } from '../ui/index.js';
import { naturalScale, scaleSymbol } from '../../../shared/natural-scale.js';

/** Axis names in array order: (W), (H, W) or (D, H, W). */
function axisNames(dims: number): string[] {
  return dims === 1 ? ['x'] : dims === 2 ? ['y', 'x'] : ['z', 'y', 'x'];
}

function signed(n: number): string {
  return n < 0 ? `−${groupThousands(-n)}` : groupThousands(n);
}

function Unit({ children }: { children: ReactNode }) {
  return <span className="text-ink-soft"> {children}</span>;
}

/** The worker's statistics, each with its unit (the API answers them in the shared schema, or null until computed). */
export function RunStatsTable({ stats, wallSeconds }: { stats: RunStatsJson | null; wallSeconds: number | null }) {
  const s = stats ? runStatsFromJSON(stats) : null;
  const rows: { label: ReactNode; value: ReactNode }[] = [];
  if (s) {
    const massOk = s.grainsIn === s.grainsOut;
    rows.push(
      { label: 'Grains added', value: <Count n={s.grainsIn} unit="grains" /> },
      {
        label: 'Grains in the final pile, minus the background',
        value: (
          <>
            <Count n={s.grainsOut} unit="grains" />
            <span className={`ml-2 text-xs ${massOk ? 'text-leaf' : 'text-stamp'}`}>{massOk ? 'all accounted for' : 'differs from grains added'}</span>
          </>
        ),
      },
      { label: 'Sites that toppled', value: <Count n={s.toppledSites} unit="sites" showPower={false} /> },
      { label: 'Topplings in all', value: <Count n={s.totalTopplings} unit="topplings" /> },
      { label: 'Topplings at the origin', value: <Count n={s.originOdometer} unit="topplings" showPower={false} /> },
      { label: 'Radius (Euclidean)', value: <>{s.radiusEuclidean.toFixed(2)}<Unit>lattice spacings</Unit></> },
      { label: 'Radius (largest coordinate)', value: <>{groupThousands(s.radiusLinf)}<Unit>lattice spacings</Unit></> },
      // the natural length is n^(1/d): n on the line, √n on the plane, ∛n on the cubic lattice
      { label: `Radius ÷ ${scaleSymbol(s.shape.length)}`, value: s.grainsIn > 0n ? (s.radiusEuclidean / naturalScale(Number(s.grainsIn), s.shape.length)).toFixed(4) : '—' },
      {
        label: 'Toppled region',
        value: s.bbox ? (
          <span className="font-mono text-[13px]">
            {/* x first, as the readout and the composer write coordinates; the bounds come in array order (z, y, x) */}
            {s.bbox
              .map(([lo, hi], i) => `${axisNames(s.bbox!.length)[i]} ∈ [${signed(lo)}, ${signed(hi)}]`)
              .reverse()
              .join(', ')}
          </span>
        ) : (
          'nothing toppled'
        ),
      },
      { label: 'Array size', value: <span className="tnum">{s.shape.map((d) => groupThousands(d)).join(' × ')}<Unit>sites</Unit></span> },
      { label: 'Mean height of toppled sites', value: s.meanHeightToppled === null ? '—' : <>{s.meanHeightToppled.toFixed(4)}<Unit>grains per site</Unit></> },
      {
        label: 'Toppled sites by final height',
        value: (
          <span className="inline-flex flex-wrap justify-end gap-x-4 gap-y-0.5">
            {s.heightCounts.map((c, h) => (
              <span key={h} className="whitespace-nowrap">
                <span className="text-ink-soft">h = {h}:</span> {groupThousands(c)}
              </span>
            ))}
          </span>
        ),
      },
      // the engine's own measured seconds (a fraction for small runs), not rounded away to "0 s"
      { label: 'Engine time', value: formatElapsed(s.seconds) },
    );
  }
  if (wallSeconds !== null) rows.push({ label: 'Wall-clock time', value: formatElapsed(wallSeconds) });
  if (rows.length === 0) return <p className="text-sm text-ink-faint">No statistics yet.</p>;
  return (
    <table className="w-full text-sm">
      <tbody>
        {rows.map((r, i) => (
          <tr key={i} className="border-b border-rule-soft last:border-0">
            <th scope="row" className="py-1.5 pr-6 text-left align-top font-normal text-ink-soft">
              {r.label}
            </th>
            <td className="py-1.5 text-right tnum">{r.value}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

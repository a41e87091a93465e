import type { Legend } from '../../../shared/palettes.js';

/** A layer's legend on the dark ground: one swatch per height, or a labelled ramp for continuous layers. */
export function LegendCard({ legend }: { legend: Legend }) {
  return (
    <figure className="rounded-md bg-black/55 px-3 py-2 text-[11px] text-white/85 backdrop-blur" aria-label="legend">
      <figcaption className="mb-1.5 font-medium text-white">{legend.title}</figcaption>
      {legend.kind === 'discrete' ? (
        <ul className="flex flex-wrap gap-x-3 gap-y-1">
          {legend.entries.map((e) => (
            <li key={e.label} className="flex items-center gap-1.5">
              <Swatch colour={e.colour} transparent={e.transparent} />
              <span className="tnum">{e.label}</span>
            </li>
          ))}
        </ul>
      ) : (
        <div className="w-64 px-3">
          <div
            className="h-3 rounded-sm"
            style={{ background: `linear-gradient(to right, ${legend.stops.map((s) => `${s.colour} ${(s.position * 100).toFixed(2)}%`).join(', ')})` }}
          />
          <div className="relative mt-1 h-4">
            {legend.stops.map((s) => (
              <span key={s.label} className="tnum absolute -translate-x-1/2 whitespace-nowrap" style={{ left: `${s.position * 100}%` }}>
                {s.label}
              </span>
            ))}
          </div>
          {legend.masked ? (
            <p className="mt-1 flex items-center gap-1.5">
              <Swatch colour={legend.masked.colour} transparent={legend.masked.transparent} /> {legend.masked.label}
            </p>
          ) : null}
        </div>
      )}
    </figure>
  );
}

function Swatch({ colour, transparent }: { colour: string; transparent?: boolean }) {
  return (
    <span
      aria-hidden="true"
      className={`inline-block h-3 w-3 rounded-[2px] ring-1 ring-white/30 ${transparent ? 'bg-[repeating-conic-gradient(#666_0_25%,#333_0_50%)] bg-[length:6px_6px]' : ''}`}
      style={transparent ? undefined : { background: colour }}
    />
  );
}

import type { Legend } from '../../../shared/palettes.js';
import { legendTicks, shortLabels } from '../../../shared/legend-ticks.js';

/** Width of the ramp in CSS pixels: the card's fixed width less its padding. */
export const RAMP_PX = 232;
/** Least room between two tick labels, CSS pixels. */
const TICK_GAP_PX = 6;
const TICK_FONT = '11px "Work Sans", sans-serif';

let measurer: CanvasRenderingContext2D | null | undefined;
/** A label's width in the card's type; without a canvas (server rendering, tests) about 0.6 em per character. */
export function tickWidth(label: string): number {
  if (measurer === undefined) measurer = typeof document === 'undefined' ? null : document.createElement('canvas').getContext('2d');
  if (!measurer) return label.length * 6.6;
  measurer.font = TICK_FONT;
  return measurer.measureText(label).width;
}

/** A layer's legend on the dark ground: one swatch per height, or a labelled ramp for continuous layers. */
export function LegendCard({ legend, widthOf = tickWidth }: { legend: Legend; widthOf?: (label: string) => number }) {
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
        <div className="px-3" style={{ width: RAMP_PX + 24 }}>
          <div
            className="h-3 rounded-sm"
            style={{ background: `linear-gradient(to right, ${legend.stops.map((s) => `${s.colour} ${(s.position * 100).toFixed(2)}%`).join(', ')})` }}
          />
          {/* ticks that fit the ramp: crowded ones give way, and then every label takes the short form, powers of ten on the log scale (shared with the print) */}
          <div className="relative mt-1 h-4" data-testid="legend-ticks">
            {legendTicks(legend.stops, RAMP_PX, widthOf, TICK_GAP_PX, shortLabels(legend.scale, true)).map((t) => (
              <span key={t.label} className="absolute whitespace-nowrap" style={{ left: `${t.left.toFixed(1)}px` }}>
                {t.label}
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

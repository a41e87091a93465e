import { heightColour, LAYERS, PALETTES, rgbaToHex, sampleRamp, type Layer, type Palette, type PaletteId, type UntoppledStyle } from '../../../shared/palettes.js';
import { LAYER_HINTS, LAYER_LABELS } from '../labels.js';
import { toggled } from './formState.js';

/** Heights shown in a palette's swatch: the four stable heights of the square lattice. */
const SWATCH_HEIGHTS = [0, 1, 2, 3];

/**
 * The "what to draw" part of the run form: layers and palettes (each pair is one deep-zoom pyramid,
 * counted by the estimate) and how untoppled cells look. Messages come from the shared run-spec schema.
 */
export function RenderChoices({
  layers,
  palettes,
  untoppled,
  onChange,
  layersError,
  palettesError,
}: {
  layers: Layer[];
  palettes: PaletteId[];
  untoppled: UntoppledStyle;
  onChange: (patch: { layers?: Layer[]; palettes?: PaletteId[]; untoppled?: UntoppledStyle }) => void;
  layersError?: string;
  palettesError?: string;
}) {
  return (
    <fieldset className="col-span-3 grid grid-cols-[minmax(0,1fr)_minmax(0,1.4fr)] gap-6" aria-label="what to draw">
      <div>
        <p className="text-sm font-medium">Layers to draw</p>
        <ul className="mt-2 space-y-1.5">
          {LAYERS.map((l) => (
            <li key={l} className="flex items-start gap-2 text-sm">
              {/* the hint stays outside the label, so the label is just the layer's name */}
              <input
                type="checkbox"
                id={`layer-${l}`}
                className="mt-1"
                checked={layers.includes(l)}
                onChange={() => onChange({ layers: toggled(layers, l) })}
                aria-describedby={`layer-${l}-hint`}
              />
              <span>
                <label htmlFor={`layer-${l}`}>{LAYER_LABELS[l]}</label>
                <span id={`layer-${l}-hint`} className="block text-xs text-ink-soft">
                  {LAYER_HINTS[l]}
                </span>
              </span>
            </li>
          ))}
        </ul>
        {layersError ? (
          <p role="alert" className="mt-1 text-xs font-medium text-stamp" data-testid="layers-error">
            {layersError}
          </p>
        ) : null}
        <div className="mt-3 text-sm">
          <span className="font-medium">Sites that never toppled</span>
          <div className="mt-1 flex gap-4">
            {(['neutral', 'transparent'] as const).map((u) => (
              <label key={u} className="flex items-center gap-1.5">
                <input type="radio" name="untoppled" value={u} checked={untoppled === u} onChange={() => onChange({ untoppled: u })} />
                {u === 'neutral' ? 'a quiet grey' : 'see-through'}
              </label>
            ))}
          </div>
          <span className="block text-xs text-ink-soft">applies to the toppled-sites and odometer layers</span>
        </div>
      </div>
      <div>
        <p className="text-sm font-medium">Palettes</p>
        <ul className="mt-2 space-y-1.5">
          {PALETTES.map((p) => (
            <li key={p.id}>
              <label className="flex items-center gap-2 text-sm">
                <input type="checkbox" checked={palettes.includes(p.id)} onChange={() => onChange({ palettes: toggled(palettes, p.id) })} />
                <PaletteSwatch palette={p} untoppled={untoppled} />
                <span>
                  {p.name}
                  {p.colourBlindSafe ? <span className="ml-1 text-xs text-ink-soft">· colour-blind safe</span> : null}
                  {p.grayscale ? <span className="ml-1 text-xs text-ink-soft">· for print</span> : null}
                </span>
              </label>
            </li>
          ))}
        </ul>
        {palettesError ? (
          <p role="alert" className="mt-1 text-xs font-medium text-stamp">
            {palettesError}
          </p>
        ) : null}
        <p className="mt-2 text-xs text-ink-soft">
          {layers.length * palettes.length} deep-zoom view{layers.length * palettes.length === 1 ? '' : 's'}, each with its legend.
        </p>
      </div>
    </fieldset>
  );
}

/** Heights 0..3, then the sequential ramp (odometer) and the untoppled colour: a preview of the palette. */
export function PaletteSwatch({ palette, untoppled }: { palette: Palette; untoppled: UntoppledStyle }) {
  const heights = SWATCH_HEIGHTS.map((h) => rgbaToHex(heightColour(palette, h, SWATCH_HEIGHTS.length - 1)));
  const ramp = [0, 0.25, 0.5, 0.75, 1].map((t) => rgbaToHex(sampleRamp(palette.ramp, t)));
  return (
    <span className="inline-flex items-center gap-1" aria-hidden="true" data-testid={`swatch-${palette.id}`}>
      <span className="inline-flex overflow-hidden rounded-sm ring-1 ring-rule">
        {heights.map((c, i) => (
          <span key={i} className="inline-block h-4 w-3" style={{ background: c }} />
        ))}
      </span>
      <span className="inline-block h-4 w-10 rounded-sm ring-1 ring-rule" style={{ background: `linear-gradient(to right, ${ramp.join(', ')})` }} />
      <span
        className={`inline-block h-4 w-3 rounded-sm ring-1 ring-rule ${untoppled === 'transparent' ? 'bg-[repeating-conic-gradient(#ddd_0_25%,#fff_0_50%)] bg-[length:6px_6px]' : ''}`}
        style={untoppled === 'transparent' ? undefined : { background: palette.neutral }}
      />
    </span>
  );
}

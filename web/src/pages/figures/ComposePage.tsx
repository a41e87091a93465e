import { useMemo, useState } from 'react';
import { Link, useNavigate, useParams, useSearchParams } from 'react-router';
import { LAYERS, PALETTES } from '../../../../shared/palettes.js';
import { COLUMN_NAMES, JOURNAL_WIDTHS_MM, PAPER_NAMES } from '../../../../shared/print-page.js';
import {
  MAX_DPI,
  MIN_DPI,
  printableFigureSpecSchema,
  startingComposition,
  type FigureSpec,
  type FigureSpecInput,
  type PanelSpec,
} from '../../../../shared/print-spec.js';
import { regionText, unreducedNote } from '../../../../shared/print-words.js';
import { layoutFigure } from '../../../../shared/print-layout.js';
import type { FigureDetail, FigureResponse, Run } from '../../api/contract.js';
import { isApiError, isStatus } from '../../api/ApiError.js';
import { useCreateFigure, useFigure, useMe, useRun, useRuns, useUpdateFigure } from '../../api/queries.js';
import { isZeroBackground } from '../../../../shared/run-spec.js';
import { latticeOfSpec } from '../../labels.js';
import { drawnOf } from '../../viewer/drawnViews.js';
import { Button, Count, EmptyState, ErrorPanel, FormError, friendlyMessage, Notice, NumberField, PageHeading, Section, SelectField, SkeletonBlock, TextField } from '../../ui/index.js';
import { RegionDrawer } from '../../viewer/RegionDrawer.js';
import { ProofPreview } from './ProofPreview.js';
import { rescaledUnitName } from './rescaledUnit.js';
import { PrintSizeNote } from './PrintSizeNote.js';
import { fixedPageMm } from './printSize.js';
import { saveBlockedReason } from './saveBlocked.js';
import { specIssueLines } from './specIssues.js';
import { NO_FINISHED_RUNS, startingRun } from './startingRun.js';
import { titleHint } from './titleHint.js';

const DPI_PRESETS = [150, 300, 600, 1200] as const;
const LAYER_NAMES: Record<string, string> = { heights: 'final heights', toppled: 'toppled sites only', difference: 'difference from the background', odometer: 'odometer (log scale)' };

type Draft = { title: string; caption: string; spec: FigureSpecInput };

function newDraft(runId: string): Draft {
  return { title: '', caption: '', spec: startingComposition(runId) };
}

/** /figures/new (?run=<id> to start from that run) and /lab/figures/:slug/edit: compose a figure from the lab's finished runs. */
export function ComposePage() {
  const { slug } = useParams();
  const [params] = useSearchParams();
  const me = useMe();
  const labId = me.data?.activeLabId ?? null;
  const runs = useRuns({ labId: labId ?? undefined, status: 'finished', pageSize: 100, sort: 'finishedAt', order: 'desc' });
  const existing = useFigure(slug ?? '');
  if (me.isPending || runs.isPending || (slug && existing.isPending)) return <SkeletonBlock lines={10} />;
  if (runs.isError) return <ErrorPanel error={runs.error} />;
  if (slug && existing.isError && !isStatus(existing.error, 404)) return <ErrorPanel error={existing.error} />;
  // only members of a figure's lab may change it: anyone else (the API answers 404 for a draft,
  // the published version alone for a public figure) gets no form to fill in
  if (slug && (existing.isError || !existing.data || existing.data.withdrawn || !existing.data.figure.canEdit)) {
    const readable = existing.data && !existing.data.withdrawn ? existing.data.figure : null;
    return (
      <div data-testid="compose-no-access">
        <EmptyState
          title={readable ? 'Only its lab can change this figure' : 'No figure to edit here'}
          action={readable ? <Link to={`/f/${readable.slug}`}>Open the published figure</Link> : <Link to="/lab/figures">Your lab's figures</Link>}
        >
          {readable
            ? `“${readable.title}” belongs to ${readable.labName}; only its members can edit its composition.`
            : 'There is no figure at this address, or it belongs to a lab you are not a member of.'}
        </EmptyState>
      </div>
    );
  }
  if (!labId) return <EmptyState title="No lab yet">Join or create a lab to compose figures from its runs.</EmptyState>;
  const finished = runs.data.runs.filter((r) => r.stats);
  const figure = slug && existing.data && !existing.data.withdrawn ? existing.data.figure : null;
  if (figure) {
    if (finished.length === 0) return <EmptyState title={NO_FINISHED_RUNS.title}>{NO_FINISHED_RUNS.text}</EmptyState>;
    return <Composer key={figure.id} labId={labId} runs={finished} figure={figure} firstRunId={finished[0]!.id} />;
  }
  return <NewFigure labId={labId} finished={finished} asked={params.get('run')} />;
}

/** A new figure starts from the run its address names, or the newest; a run it cannot use is said, not swapped. */
function NewFigure({ labId, finished, asked }: { labId: string; finished: Run[]; asked: string | null }) {
  const unlisted = asked !== null && asked !== '' && !finished.some((r) => r.id === asked);
  const lookup = useRun(unlisted ? asked : '');
  // a 4xx is the API's "no such run for you"; anything else is an outage, not an answer about the run
  if (lookup.isError && !isClientError(lookup.error)) return <ErrorPanel error={lookup.error} />;
  const start = startingRun(asked, finished, labId, { pending: unlisted && lookup.isPending, run: lookup.data?.run ?? null });
  if (start.kind === 'looking') return <SkeletonBlock lines={10} />;
  if (start.kind === 'refused') {
    if (!unlisted) return <EmptyState title={start.title}>{start.text}</EmptyState>;
    return <PickARun title={start.title} text={start.text} runs={finished} />;
  }
  // a run older than the listed ones is still the lab's own: offered beside them
  const runs = finished.includes(start.run) ? finished : [start.run, ...finished];
  return <Composer key="new" labId={labId} runs={runs} figure={null} firstRunId={start.run.id} />;
}

const isClientError = (e: unknown) => isApiError(e) && e.status >= 400 && e.status < 500;

function PickARun({ title, text, runs }: { title: string; text: string; runs: Run[] }) {
  const navigate = useNavigate();
  const [picked, setPicked] = useState(runs[0]?.id ?? '');
  return (
    <div className="flex max-w-2xl flex-col gap-6" data-testid="compose-run-refused">
      <PageHeading overline="New figure" title="Compose a figure" />
      <Notice tone="warning" title={title}>
        {text}
      </Notice>
      {runs.length === 0 ? (
        <p className="text-sm text-ink-soft">{NO_FINISHED_RUNS.text}</p>
      ) : (
        <form
          className="flex flex-wrap items-end gap-3"
          onSubmit={(e) => {
            e.preventDefault();
            navigate(`/figures/new?run=${encodeURIComponent(picked)}`, { replace: true });
          }}
        >
          <SelectField label="Run to start from" value={picked} onChange={(e) => setPicked(e.target.value)} fieldClassName="min-w-0 flex-1">
            {runs.map((r) => (
              <option key={r.id} value={r.id}>
                {r.title}
              </option>
            ))}
          </SelectField>
          <Button type="submit">Start from this run</Button>
        </form>
      )}
    </div>
  );
}

function Composer({ labId, runs, figure, firstRunId }: { labId: string; runs: Run[]; figure: FigureDetail | null; firstRunId: string }) {
  const navigate = useNavigate();
  const [draft, setDraft] = useState<Draft>(() => (figure ? { title: figure.title, caption: figure.caption, spec: figure.spec } : newDraft(firstRunId)));
  const create = useCreateFigure();
  const update = useUpdateFigure(figure?.slug ?? '');
  const save = figure ? update : create;

  const spec = draft.spec;
  const setSpec = (patch: Partial<FigureSpecInput>) => setDraft((d) => ({ ...d, spec: { ...d.spec, ...patch } }));
  const setPanel = (i: number, patch: Partial<PanelSpec>) =>
    setSpec({ panels: spec.panels.map((p, j) => (j === i ? { ...p, ...patch } : p)) });

  // in the words of the other forms and of the API's answer ("must be at most 1,200"), each under its field's label
  const parsed = printableFigureSpecSchema.safeParse(spec, { error: friendlyMessage });
  const geometry = useMemo(
    () => runs.map((r) => ({ runId: r.id, shape: r.stats!.shape, origin: r.stats!.origin, chips: r.spec.chips })),
    [runs],
  );
  const layout = parsed.success ? layoutFigure(parsed.data, geometry) : null;
  const issues = parsed.success ? [] : specIssueLines(parsed.error.issues);
  // the same refusal the API makes: kept here so Save waits for another layer instead of failing
  const layerUnavailable = spec.panels.some((p) => {
    const run = runs.find((r) => r.id === p.runId);
    return p.layer === 'difference' && run !== undefined && isZeroBackground(run.spec.background);
  });

  const blocked = saveBlockedReason({ settingsValid: parsed.success, title: draft.title, layerUnavailable });

  // refusals (a lost lab membership, a run that expired meanwhile) show under the button through save.error
  function submit(e: React.FormEvent) {
    e.preventDefault();
    if (!parsed.success) return;
    const done = { onSuccess: (res: FigureResponse) => void (res.withdrawn || navigate(`/lab/figures/${res.figure.slug}`)) };
    if (figure) update.mutate({ title: draft.title, caption: draft.caption, spec: parsed.data }, done);
    else create.mutate({ labId, title: draft.title, caption: draft.caption, spec: parsed.data }, done);
  }
  const live = figure && figure.publishedVersion !== null && figure.withdrawnAt === null;

  const size = spec.size;
  // the title's example follows the run the figure shows first
  const firstPanelRun = runs.find((r) => r.id === spec.panels[0]?.runId);
  const rescaled = rescaledUnitName(spec.panels.flatMap((p) => runs.find((r) => r.id === p.runId)?.stats?.shape.length ?? []));
  // a page past the pixel limit does not parse, yet its size and the DPI that would fit are still shown
  const pageMm = layout ? { width: layout.page.widthMm, height: layout.page.heightMm } : fixedPageMm(size);
  return (
    <form onSubmit={submit}>
      <PageHeading
        overline={figure ? `Figure · ${figure.slug}` : 'New figure'}
        title={figure ? `Compose “${figure.title}”` : 'Compose a figure'}
        lede="Choose runs, the region in lattice coordinates, the layer and palette, and the paper size and resolution. The proof on the right follows every change and warns in plain words when the print would lose detail or cannot be made."
      />
      {live ? (
        <div className="mb-6" data-testid="compose-published-note">
          <Notice tone="info" title={`Published: readers see version ${figure.publishedVersion}`}>
            Saving keeps your changes for the lab as a draft; the permanent link keeps showing version {figure.publishedVersion} as published. To show the changes, print again and publish the new version.
          </Notice>
        </div>
      ) : null}
      <div className="grid grid-cols-1 items-start gap-8 md:grid-cols-[minmax(0,1.5fr)_minmax(0,1fr)] lg:grid-cols-[minmax(0,1.05fr)_minmax(0,1fr)]">
        <div className="flex flex-col gap-6">
          <Section title="Title and caption">
            <div className="flex flex-col gap-4">
              <TextField label="Title" value={draft.title} required maxLength={200} onChange={(e) => setDraft({ ...draft, title: e.target.value })} placeholder={firstPanelRun ? titleHint(firstPanelRun.spec) : undefined} />
              <label className="flex flex-col gap-1.5 text-sm font-medium text-ink">
                Caption (printed under the panels, and shown on the reader page)
                <textarea
                  className="min-h-24 rounded-md border border-rule bg-sheet px-3 py-2 text-sm font-normal"
                  value={draft.caption}
                  maxLength={2000}
                  onChange={(e) => {
                    const text = e.target.value;
                    setDraft({ ...draft, caption: text, spec: { ...draft.spec, caption: text.trim() ? { text, fontPt: draft.spec.caption?.fontPt ?? 9 } : undefined } });
                  }}
                />
              </label>
            </div>
          </Section>

          <Section title="Panels" description="Each panel is one finished run of your lab. Regions are inclusive lattice coordinates relative to the run's origin.">
            <div className="flex flex-col gap-5">
              {spec.panels.map((p, i) => (
                <PanelFields key={i} index={i} panel={p} runs={runs} onChange={(patch) => setPanel(i, patch)} onRemove={spec.panels.length > 1 ? () => setSpec({ panels: spec.panels.filter((_, j) => j !== i) }) : undefined} />
              ))}
              <div className="flex flex-wrap items-end gap-4">
                <Button
                  tone="quiet"
                  size="sm"
                  disabled={spec.panels.length >= 16}
                  onClick={() => {
                    const panels = [...spec.panels, { runId: runs[Math.min(spec.panels.length, runs.length - 1)]!.id }];
                    const cols = Math.min(4, panels.length);
                    setSpec({ panels, grid: { ...spec.grid, cols, rows: Math.ceil(panels.length / cols) } });
                  }}
                >
                  Add a panel
                </Button>
                <NumberField label="Grid rows" round min={1} max={8} value={spec.grid?.rows ?? 1} onValue={(n) => setSpec({ grid: { ...spec.grid, rows: n } })} fieldClassName="w-24" />
                <NumberField label="Grid columns" round min={1} max={8} value={spec.grid?.cols ?? 1} onValue={(n) => setSpec({ grid: { ...spec.grid, cols: n } })} fieldClassName="w-28" />
                <SelectField label="Shared scale" value={spec.grid?.sharedScale ?? 'none'} onChange={(e) => setSpec({ grid: { ...spec.grid, sharedScale: e.target.value as 'none' } })}>
                  <option value="none">none: each panel fills its place</option>
                  <option value="lattice">the same lattice unit</option>
                  <option value="rescaled">the same rescaled unit {rescaled}</option>
                </SelectField>
              </div>
            </div>
          </Section>

          <Section title="Size and resolution">
            {/* two columns: at three, options such as "journal column width" were cut beside the proof */}
            <div className="grid grid-cols-2 gap-4">
              <SelectField
                label="Size"
                value={size.kind}
                onChange={(e) =>
                  setSpec({
                    size: e.target.value === 'paper' ? { kind: 'paper', paper: 'A4' } : e.target.value === 'column' ? { kind: 'column', column: 'single' } : { kind: 'custom', width: 120, height: 90, unit: 'mm' },
                  })
                }
              >
                <option value="column">journal column</option>
                <option value="paper">paper (ISO A, US)</option>
                <option value="custom">custom size</option>
              </SelectField>
              {size.kind === 'paper' ? (
                <>
                  <SelectField label="Paper" value={size.paper} onChange={(e) => setSpec({ size: { ...size, paper: e.target.value as 'A4' } })}>
                    {PAPER_NAMES.map((n) => (
                      <option key={n} value={n}>
                        {n.length === 2 ? n : n[0]!.toUpperCase() + n.slice(1)}
                      </option>
                    ))}
                  </SelectField>
                  <SelectField label="Orientation" value={size.orientation ?? 'portrait'} onChange={(e) => setSpec({ size: { ...size, orientation: e.target.value as 'portrait' } })}>
                    <option value="portrait">portrait</option>
                    <option value="landscape">landscape</option>
                  </SelectField>
                </>
              ) : size.kind === 'column' ? (
                <>
                  <SelectField label="Column" value={size.column} onChange={(e) => setSpec({ size: { ...size, column: e.target.value as 'single' } })}>
                    {COLUMN_NAMES.map((c) => (
                      <option key={c} value={c}>
                        {c.replace(/-/g, ' ')}, {JOURNAL_WIDTHS_MM[c]} mm
                      </option>
                    ))}
                  </SelectField>
                  <NumberField
                    label="Height (mm)"
                    optional
                    min={10}
                    placeholder="as the panels need"
                    value={size.heightMm}
                    onValue={(n) => setSpec({ size: { ...size, heightMm: n } })}
                  />
                </>
              ) : (
                <>
                  <NumberField label={`Width (${size.unit ?? 'mm'})`} step="any" min={1} value={size.width} onValue={(n) => n !== undefined && setSpec({ size: { ...size, width: n } })} />
                  <div className="flex gap-2">
                    <NumberField label={`Height (${size.unit ?? 'mm'})`} step="any" min={1} value={size.height} onValue={(n) => n !== undefined && setSpec({ size: { ...size, height: n } })} />
                    <SelectField label="Unit" value={size.unit ?? 'mm'} onChange={(e) => setSpec({ size: { ...size, unit: e.target.value as 'mm' } })}>
                      <option value="mm">mm</option>
                      <option value="in">in</option>
                    </SelectField>
                  </div>
                </>
              )}
              <SelectField label="Resolution" value={DPI_PRESETS.includes(spec.dpi as 300) ? String(spec.dpi) : 'other'} onChange={(e) => e.target.value !== 'other' && setSpec({ dpi: Number(e.target.value) })}>
                {DPI_PRESETS.map((d) => (
                  <option key={d} value={d}>
                    {d} DPI
                  </option>
                ))}
                <option value="other">other…</option>
              </SelectField>
              <NumberField label="DPI" min={MIN_DPI} max={MAX_DPI} value={spec.dpi ?? 300} onValue={(n) => setSpec({ dpi: n })} hint={`${MIN_DPI} to ${MAX_DPI}`} />
              <SelectField label="Panel labels" value={spec.labels ?? 'letters'} onChange={(e) => setSpec({ labels: e.target.value as 'letters' })}>
                <option value="letters">(a), (b), …</option>
                <option value="numbers">(1), (2), …</option>
                <option value="none">none</option>
              </SelectField>
            </div>
            <p className="mt-4 text-sm font-medium text-ink">Margins (mm)</p>
            <div className="mt-1.5 grid grid-cols-4 gap-4">
              {(['top', 'right', 'bottom', 'left'] as const).map((side) => (
                <NumberField
                  key={side}
                  // one short word on screen, so the four fields line up; the whole name for assistive technology
                  label={
                    <>
                      <span className="sr-only">Margin </span>
                      {side[0]!.toUpperCase() + side.slice(1)}
                      <span className="sr-only"> (mm)</span>
                    </>
                  }
                  min={0}
                  step="any"
                  value={spec.margins?.[side] ?? 10}
                  onValue={(n) => n !== undefined && setSpec({ margins: { top: 10, right: 10, bottom: 10, left: 10, ...spec.margins, [side]: n } })}
                />
              ))}
            </div>
            <div className="mt-4 flex flex-wrap items-end gap-6">
              <SelectField
                label="Scale bar"
                value={spec.scaleBar ? spec.scaleBar.unit ?? 'lattice' : 'none'}
                onChange={(e) => setSpec({ scaleBar: e.target.value === 'none' ? undefined : { unit: e.target.value as 'lattice' } })}
                fieldClassName="w-56"
              >
                <option value="none">none</option>
                <option value="lattice">in lattice units</option>
                <option value="rescaled">in rescaled units {rescaled}</option>
              </SelectField>
              <label className="flex items-center gap-2 pb-2 text-sm text-ink">
                <input type="checkbox" checked={spec.legend ?? true} onChange={(e) => setSpec({ legend: e.target.checked })} /> colour legend
              </label>
            </div>
          </Section>
        </div>

        <div className="sticky top-6 flex flex-col gap-4">
          <Section title="Proof" description={layout ? `${layout.page.widthMm.toFixed(1)} × ${layout.page.heightMm.toFixed(1)} mm · ${layout.page.widthPx.toLocaleString('en-US')} × ${layout.page.heightPx.toLocaleString('en-US')} px at ${layout.dpi} DPI` : 'fix the settings listed below to see the page'}>
            {layout && parsed.success ? <ProofPreview spec={parsed.data as FigureSpec} layout={layout} runs={runs} /> : null}
            {issues.length ? (
              <div className="mt-3">
                <Notice tone="warning" title="These settings are not valid yet">
                  <ul className="list-disc pl-5">{issues.map((m) => <li key={m}>{m}</li>)}</ul>
                </Notice>
              </div>
            ) : null}
            {layout?.warnings.length ? (
              <ul className="mt-4 flex flex-col gap-2" data-testid="proof-warnings">
                {layout.warnings.map((w, i) => (
                  <li key={i}>
                    <Notice tone="warning" title={w.blocking ? 'Cannot be printed like this' : w.code === 'cells-reduced' ? 'Detail will be reduced' : 'Note'}>
                      {w.message}
                    </Notice>
                  </li>
                ))}
              </ul>
            ) : layout ? (
              <p className="mt-3 text-sm text-ink-soft">
                {unreducedNote(layout.panels.map((p) => ({ index: p.index, cellPx: p.cellPx, dims: geometry.find((g) => g.runId === p.runId)?.shape.length ?? 2 })))}
              </p>
            ) : null}
            {pageMm && Number.isInteger(spec.dpi ?? 300) ? <PrintSizeNote widthMm={pageMm.width} heightMm={pageMm.height} dpi={spec.dpi ?? 300} /> : null}
          </Section>
          <FormError error={save.error} />
          <div className="flex items-center justify-end gap-3">
            {blocked ? (
              <p className="text-sm text-ink-soft" data-testid="save-blocked">
                {blocked}
              </p>
            ) : null}
            <Button type="submit" busy={save.isPending} busyLabel="Saving…" disabled={blocked !== null}>
              {figure ? 'Save the composition' : 'Create the figure'}
            </Button>
          </div>
        </div>
      </div>
    </form>
  );
}

function PanelFields({ index, panel, runs, onChange, onRemove }: { index: number; panel: FigureSpecInput['panels'][number]; runs: Run[]; onChange: (p: Partial<PanelSpec>) => void; onRemove?: () => void }) {
  const run = runs.find((r) => r.id === panel.runId);
  const whole = run?.stats ? wholeRegion(run.stats.shape, run.stats.origin) : null;
  const dims = run?.stats?.shape.length ?? 2;
  const region = panel.region ?? null;
  const [drawing, setDrawing] = useState(false);
  const layer = panel.layer ?? 'heights';
  // a background of 0 everywhere has no difference layer (it would repeat the heights): not offered
  const noDifference = run ? isZeroBackground(run.spec.background) : false;
  const drawn = run ? (drawnOf(run.spec).layers as readonly string[]) : [];
  const layerHint =
    layer === 'difference' && noDifference
      ? 'Not available for this run: its background is 0 everywhere, so there is no difference to show. Choose another layer.'
      : run && !drawn.includes(layer)
        ? `This run drew no ${LAYER_NAMES[layer]} view, so the proof cannot show it; the print draws it from the arrays.`
        : undefined;
  return (
    <fieldset className="rounded-lg border border-rule-soft px-4 pb-4 pt-2" data-testid={`panel-${index}`}>
      <legend className="px-1 text-sm font-semibold text-ink">Panel {index + 1}</legend>
      <div className="grid grid-cols-2 gap-4">
        {/* run titles are long: the run takes the whole row so its name is not cut */}
        <SelectField
          label="Run"
          fieldClassName="col-span-2"
          value={panel.runId}
          onChange={(e) => onChange({ runId: e.target.value, region: undefined })}
          // lattice and n under the field rather than in every option, so the closed field has room for the title
          hint={
            run ? (
              <>
                {latticeOfSpec(run.spec.lattice)} · n = <Count n={run.spec.chips} />
              </>
            ) : undefined
          }
        >
          {runs.map((r) => (
            <option key={r.id} value={r.id}>
              {r.title}
            </option>
          ))}
        </SelectField>
        <SelectField
          label="Layer"
          value={layer}
          onChange={(e) => onChange({ layer: e.target.value as PanelSpec['layer'] })}
          error={layer === 'difference' && noDifference ? layerHint : undefined}
          hint={layer === 'difference' && noDifference ? undefined : layerHint}
        >
          {LAYERS.map((l) => (
            <option key={l} value={l} disabled={l === 'difference' && noDifference}>
              {l === 'difference' && noDifference ? `${LAYER_NAMES[l]} (not for a 0 background)` : LAYER_NAMES[l]}
            </option>
          ))}
        </SelectField>
        <SelectField label="Palette" value={panel.palette ?? 'tidewater'} onChange={(e) => onChange({ palette: e.target.value as PanelSpec['palette'] })}>
          {PALETTES.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name}
            </option>
          ))}
        </SelectField>
        <div className="flex gap-2">
          <SelectField label="Magnification" value={panel.magnification === undefined || panel.magnification === 'fit' ? 'fit' : 'fixed'} onChange={(e) => onChange({ magnification: e.target.value === 'fit' ? 'fit' : 4 })}>
            <option value="fit">fit the panel</option>
            <option value="fixed">fixed</option>
          </SelectField>
          {typeof panel.magnification === 'number' ? (
            <NumberField label="px per cell" round min={1} max={256} value={panel.magnification} onValue={(n) => n !== undefined && onChange({ magnification: n })} fieldClassName="w-28" />
          ) : null}
        </div>
      </div>
      <div className="mt-4 flex flex-wrap items-end gap-3">
        <label className="flex items-center gap-2 pb-2 text-sm text-ink">
          <input type="checkbox" checked={region === null} onChange={(e) => onChange({ region: e.target.checked ? undefined : (whole ?? undefined) })} /> the whole run
        </label>
        {region
          ? (['xMin', 'xMax', 'yMin', 'yMax'] as const).map((k) => (
              <NumberField key={k} label={k} mono round value={region[k]} onValue={(n) => n !== undefined && onChange({ region: { ...region, [k]: n } })} fieldClassName="w-24" />
            ))
          : whole ? (
              <span className="pb-2 font-mono text-xs text-ink-soft">
                {regionText(whole, dims)}
              </span>
            ) : null}
        <TextField label="Label" value={panel.label ?? ''} placeholder="automatic" maxLength={24} onChange={(e) => onChange({ label: e.target.value || undefined })} fieldClassName="w-32" />
        {run?.stats ? (
          <Button tone="quiet" size="sm" aria-expanded={drawing} onClick={() => setDrawing(!drawing)}>
            {drawing ? 'Hide the view' : 'Draw the region on the view'}
          </Button>
        ) : null}
        {onRemove ? (
          <Button tone="danger" size="sm" onClick={onRemove}>
            Remove
          </Button>
        ) : null}
      </div>
      {drawing && run?.stats ? (
        <div className="mt-4">
          <RegionDrawer
            base={{ kind: 'run', id: run.id }}
            geometry={{ shape: run.stats.shape, origin: run.stats.origin, grains: run.spec.chips }}
            spec={run.spec}
            layer={panel.layer ?? 'heights'}
            palette={panel.palette ?? 'tidewater'}
            region={region}
            onChange={(r) => onChange({ region: r })}
          />
        </div>
      ) : null}
    </fieldset>
  );
}

function wholeRegion(shape: readonly number[], origin: readonly number[]) {
  const d = shape.length;
  const W = shape[d - 1]!;
  const H = d >= 2 ? shape[d - 2]! : 1;
  const ox = origin[d - 1] ?? 0;
  const oy = d >= 2 ? origin[d - 2]! : 0;
  return { xMin: -ox, xMax: W - 1 - ox, yMin: -oy, yMax: H - 1 - oy };
}

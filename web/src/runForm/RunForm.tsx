import { useEffect, useMemo, useState, type FormEvent } from 'react';
import { useNavigate } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { useCreditCheck, useEstimate } from '../api/queries.js';
import { isStatus, messageForPeople } from '../api/ApiError.js';
import {
  CHIPS_TOO_LARGE_MESSAGE, MAX_CHIPS, createRunRequestSchema, createSeriesRequestSchema, newRunSpecSchema, type RunResponse, type RunSpecInput, type SeriesResponse,
} from '../api/contract.js';
import { backgroundKindName, latticeName } from '../labels.js';
import { formatDuration, groupThousands } from '../format.js';
import { Button, Count, FormError, SelectField, TextField, friendlyMessage, validate, serverFieldErrors, type FieldErrors } from '../ui/index.js';
import { BackgroundUpload } from './BackgroundUpload.js';
import { RenderChoices } from './RenderChoices.js';
import { UnitCellEditor } from './UnitCellEditor.js';
import { CreditGate } from '../pages/credits/CreditGate.js';
import {
  BACKGROUND_KINDS, BUILTIN_PRESETS, PERIODIC_PRESET_NAMES, dimensionOfForm, errorsAfterEdit, grainCountHint, motifWording, parseGrainList, parseGrains, seriesChipsOfForm, seriesScaleHint, specOfForm, type RunFormState,
} from './formState.js';

function useDebounced<T>(value: T, ms: number): T {
  const [v, setV] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setV(value), ms);
    return () => clearTimeout(t);
  }, [value, ms]);
  return v;
}

const bytesText = (b: number) => (b >= 2 ** 30 ? `${(b / 2 ** 30).toLocaleString('en-US', { minimumFractionDigits: 2, maximumFractionDigits: 2 })} GiB` : b >= 2 ** 20 ? `${(b / 2 ** 20).toFixed(1)} MiB` : `${Math.ceil(b / 1024)} KiB`);

/**
 * Everything a run can be: a preset or drawn/uploaded periodic lattice, every background kind, extra
 * point sources, one n or a series of n. The cost prediction (POST /api/estimates) follows the typing,
 * debounced, and shows before anything is submitted.
 */
export function RunForm({ labId, initial, onClose }: { labId: string; initial: RunFormState; onClose?: () => void }) {
  const navigate = useNavigate();
  const qc = useQueryClient();
  const [f, setF] = useState<RunFormState>(initial);
  const [errors, setErrors] = useState<FieldErrors>({});
  const set = (patch: Partial<RunFormState>) => {
    setF((old) => ({ ...old, ...patch }));
    // an error under a field the author is changing no longer describes it ("title is required" beside a title)
    setErrors((old) => errorsAfterEdit(old, patch));
  };

  // the estimate is of the largest run the form would start
  const specForEstimate = useMemo(() => {
    const spec = specOfForm(f);
    if (f.mode === 'series') {
      const ns = seriesChipsOfForm(f).filter(Number.isSafeInteger);
      spec.chips = ns.length ? Math.max(...ns) : NaN;
    }
    const r = newRunSpecSchema.safeParse(spec);
    return r.success ? (r.data as RunSpecInput) : null;
  }, [f]);
  const specForEstimateDebounced = useDebounced(specForEstimate, 400);
  // what the shared schema says about the drawing choices and the background, shown as the author
  // types (a background that can never stabilize is refused here too, by the field that sets it)
  const liveIssues = useMemo(() => {
    const r = newRunSpecSchema.safeParse(specOfForm(f), { error: friendlyMessage });
    const issues = r.success ? [] : r.error.issues;
    const render = (k: string) => issues.find((i) => i.path.join('.') === `render.${k}`)?.message;
    // a background field's own issue, or one of its entries' (motif cells, weights)
    const background = (k: string) => issues.find((i) => i.path[0] === 'background' && i.path[1] === k)?.message;
    return { layers: render('layers'), palettes: render('palettes'), background };
  }, [f]);
  const estimate = useEstimate(specForEstimateDebounced);

  const create = useMutation({
    mutationFn: async (body: { kind: 'run' | 'series'; data: unknown }) =>
      body.kind === 'run'
        ? `/runs/${(await api<RunResponse>('POST', '/api/runs', body.data)).run.id}`
        : `/series/${(await api<SeriesResponse>('POST', '/api/series', body.data)).series.id}`,
    onSuccess: (to) => {
      void qc.invalidateQueries({ queryKey: ['runs'] });
      void navigate(to);
    },
    // the series form has one field for all its counts, so the server's chips.<i> land there
    onError: (e) => {
      // a refusal for credits: the estimate box's credit check should show the lab as it is now
      if (isStatus(e, 402)) void qc.invalidateQueries({ queryKey: ['credits', labId, 'check'] });
      setErrors(Object.fromEntries(Object.entries(serverFieldErrors(e)).map(([k, v]) => [f.mode === 'series' && /^chips(\.|$)/.test(k) ? 'seriesChips' : k, v])));
    },
  });

  function submit(e: FormEvent) {
    e.preventDefault();
    // a refusal from an earlier attempt no longer describes what is being submitted now
    create.reset();
    const spec = specOfForm(f);
    if (f.mode === 'single') {
      const r = validate(createRunRequestSchema, { labId, title: f.title, spec });
      if (!r.ok) return setErrors(r.errors);
      setErrors({});
      create.mutate({ kind: 'run', data: r.data });
    } else {
      const { chips: _n, ...rest } = spec;
      const r = validate(createSeriesRequestSchema, { labId, title: f.title, spec: rest, chips: seriesChipsOfForm(f) });
      if (!r.ok) return setErrors(Object.fromEntries(Object.entries(r.errors).map(([k, v]) => [k.startsWith('chips') ? 'seriesChips' : k, v])));
      setErrors({});
      create.mutate({ kind: 'series', data: r.data });
    }
  }

  const grains = parseGrains(f.chips);
  const dimension = dimensionOfForm(f);
  const motif = motifWording(dimension, f.motif);
  // the shared schema read live says all the server would about these fields, and never goes stale
  const bgErr = (k: string) => (f.backgroundKind === 'array' ? undefined : (liveIssues.background(k) ?? errors['spec.background']));
  // the prediction, or why the farm cannot compute this run at all (an answer of the estimate, not an error)
  const est = estimate.data && 'estimate' in estimate.data ? estimate.data.estimate : undefined;
  const refused = estimate.data && 'refused' in estimate.data ? estimate.data.refused : undefined;
  // the credit check the estimate box shows (CreditGate asks the same query), so a refused submit
  // that only repeats it, or the estimate's own refusal, is not said a second time by the button
  const gated = est && specForEstimate && f.mode !== 'series' ? est.credits : null;
  const creditCheck = useCreditCheck(labId, gated);
  const shownAbove = [
    specForEstimate && estimate.isError ? messageForPeople(estimate.error) : null,
    specForEstimate && refused ? refused.reason : null,
    gated !== null && creditCheck.data && !creditCheck.data.allowed ? creditCheck.data.message : null,
  ];
  const submitRefusal = create.isError && !shownAbove.includes(messageForPeople(create.error)) ? create.error : null;
  // which n the numbers shown are for (the previous answer stays up while the next one is fetched)
  const shownKey = estimate.data ? (estimate.isPlaceholderData ? null : specForEstimateDebounced) : null;
  const estimatedFor = shownKey ? Number(shownKey.chips) + (shownKey.sources ?? []).reduce((a, s) => a + s.chips, 0) : null;
  return (
    <form noValidate onSubmit={submit} className="grid grid-cols-1 gap-8 lg:grid-cols-[minmax(0,1fr)_20rem]" aria-label="new run">
      <div className="grid min-w-0 grid-cols-3 content-start gap-5">
        <TextField label="Title" name="title" value={f.title} onChange={(e) => set({ title: e.target.value })} error={errors.title} fieldClassName="col-span-3" placeholder="e.g. Square lattice, one million grains" />

        <SelectField
          label="Lattice"
          value={f.latticeMode === 'cell' ? '@cell' : f.preset}
          onChange={(e) => (e.target.value === '@cell' ? set({ latticeMode: 'cell' }) : set({ latticeMode: 'preset', preset: e.target.value }))}
          error={errors['spec.lattice.preset'] ?? errors['spec.lattice']}
        >
          {BUILTIN_PRESETS.map((l) => (
            <option key={l} value={l}>
              {latticeName(l)}
            </option>
          ))}
          {PERIODIC_PRESET_NAMES.map((l) => (
            <option key={l} value={l}>
              {latticeName(l)} (periodic)
            </option>
          ))}
          <option value="@cell">unit cell: draw or upload…</option>
        </SelectField>
        <SelectField label="How many runs" value={f.mode} onChange={(e) => set({ mode: e.target.value as RunFormState['mode'] })} hint={f.mode === 'series' ? seriesScaleHint(f) : undefined}>
          <option value="single">one run</option>
          <option value="series">a series over n</option>
        </SelectField>
        {f.mode === 'single' ? (
          <TextField
            label="Grains at the origin (n)"
            name="chips"
            inputMode="numeric"
            value={f.chips}
            onChange={(e) => set({ chips: e.target.value })}
            error={errors['spec.chips']}
            hint={grainCountHint(grains) ?? <Count n={grains} unit="grains" />}
          />
        ) : (
          <TextField
            label="Grain counts n of the series"
            value={f.seriesChips}
            onChange={(e) => set({ seriesChips: e.target.value })}
            error={errors.seriesChips}
            hint={<SeriesHint text={f.seriesChips} />}
            mono
          />
        )}
        {f.latticeMode === 'cell' ? (
          <div className="col-span-3">
            <UnitCellEditor value={f.cell} onChange={(cell) => set({ cell })} name={f.cellName} onName={(cellName) => set({ cellName })} />
            {errors['spec.lattice.periodic'] || errors['spec.lattice'] ? <p className="mt-1 text-xs text-stamp">{errors['spec.lattice.periodic'] ?? errors['spec.lattice']}</p> : null}
          </div>
        ) : null}

        <SelectField label="Background" value={f.backgroundKind} onChange={(e) => set({ backgroundKind: e.target.value as RunFormState['backgroundKind'] })}>
          {BACKGROUND_KINDS.map((k) => (
            <option key={k} value={k}>
              {backgroundKindName(k)}
            </option>
          ))}
        </SelectField>
        {f.backgroundKind === 'constant' ? (
          <TextField label="Height everywhere" inputMode="numeric" value={f.height} onChange={(e) => set({ height: e.target.value })} error={bgErr('height')} />
        ) : f.backgroundKind === 'checkerboard' || f.backgroundKind === 'annuli' ? (
          <>
            <TextField label={f.backgroundKind === 'annuli' ? 'Height of the inner annulus' : 'Height where x + y is even'} inputMode="numeric" value={f.a} onChange={(e) => set({ a: e.target.value })} error={bgErr('a')} />
            <TextField label={f.backgroundKind === 'annuli' ? 'Height of the next annulus' : 'Height where x + y is odd'} inputMode="numeric" value={f.b} onChange={(e) => set({ b: e.target.value })} error={bgErr('b')} />
          </>
        ) : f.backgroundKind === 'random' ? (
          <>
            <TextField label="Seed" inputMode="numeric" value={f.seed} onChange={(e) => set({ seed: e.target.value })} error={bgErr('seed')} />
            <TextField label="Weights of heights 0, 1, 2, …" value={f.weights} onChange={(e) => set({ weights: e.target.value })} error={bgErr('weights')} hint="relative chances, separated by spaces" mono />
          </>
        ) : f.backgroundKind === 'motif' ? (
          <label className="col-span-2 flex flex-col gap-1.5 text-sm">
            <span className="font-medium">{motif.label}</span>
            <textarea value={f.motif} onChange={(e) => set({ motif: e.target.value })} rows={dimension === 1 ? 2 : 4} className="rounded-md border border-rule bg-sheet px-3 py-2 font-mono text-sm" aria-invalid={bgErr('cells') ? true : undefined} />
            {bgErr('cells') ? <span role="alert" className="text-xs font-medium text-stamp">{bgErr('cells')}</span> : null}
            {/* also beside a refusal: on a line, that refusal reads the first row only */}
            {motif.note ? <span className="text-xs text-ink-soft" data-testid="motif-note">{motif.note}</span> : null}
          </label>
        ) : (
          <span className="col-span-2" />
        )}
        {f.backgroundKind === 'array' ? (
          <>
            <BackgroundUpload labId={labId} chosen={f.upload} onChosen={(u) => set({ upload: u ? { sha256: u.sha256, shape: u.shape } : null })} />
            {errors['spec.background.sha256'] || errors['spec.background'] ? <p className="col-span-3 -mt-3 text-xs font-medium text-stamp">choose and upload a file first</p> : null}
          </>
        ) : null}

        <fieldset className="col-span-3">
          <legend className="text-sm font-medium">Further point sources</legend>
          {f.sources.length === 0 ? <p className="mt-1 text-xs text-ink-soft">Only the origin gets grains.</p> : null}
          <div className="mt-2 space-y-2">
            {f.sources.map((s, i) => (
              <div key={i} className="flex items-start gap-3">
                <TextField label={`Site ${i + 1}`} value={s.at} mono placeholder="e.g. 40, -12" onChange={(e) => set({ sources: f.sources.map((t, j) => (j === i ? { ...t, at: e.target.value } : t)) })} error={errors[`spec.sources.${i}.at`]} />
                <TextField label="Grains" value={s.chips} inputMode="numeric" onChange={(e) => set({ sources: f.sources.map((t, j) => (j === i ? { ...t, chips: e.target.value } : t)) })} error={errors[`spec.sources.${i}.chips`]} />
                <Button tone="quiet" size="sm" className="mt-7" onClick={() => set({ sources: f.sources.filter((_, j) => j !== i) })}>
                  Remove
                </Button>
              </div>
            ))}
          </div>
          <Button tone="quiet" size="sm" className="mt-2" onClick={() => set({ sources: [...f.sources, { at: '', chips: '1000' }] })}>
            Add a source
          </Button>
        </fieldset>
        <RenderChoices
          layers={f.layers}
          palettes={f.palettes}
          untoppled={f.untoppled}
          onChange={set}
          layersError={errors['spec.render.layers'] ?? liveIssues.layers}
          palettesError={errors['spec.render.palettes'] ?? liveIssues.palettes}
        />
      </div>

      <aside className="flex min-w-0 flex-col gap-4">
        {/* huge n gives long numbers: they wrap inside the column rather than run past the page edge */}
        <div className="min-w-0 rounded-lg border border-rule bg-paper px-5 py-4 text-sm wrap-anywhere" aria-label="estimate" data-testid="estimate">
          <h3 className="mb-2 font-semibold">Before you start</h3>
          {estimatedFor !== null && specForEstimate ? (
            <p className="-mt-1 mb-2 text-xs text-ink-soft" data-testid="estimate-for">
              {f.mode === 'series' ? 'largest run, ' : ''}n = <Count n={estimatedFor} />
              {estimate.isFetching || specForEstimate !== specForEstimateDebounced ? ' · updating…' : ''}
            </p>
          ) : null}
          {!specForEstimate ? (
            <p className="text-ink-soft">Complete the form to see the size, time and cost.</p>
          ) : estimate.isError ? (
            <FormError error={estimate.error} />
          ) : refused ? (
            <FormError error={new Error(refused.reason)} />
          ) : !est ? (
            <p className="text-ink-soft">Estimating…</p>
          ) : (
            <dl className={`grid grid-cols-[auto_minmax(0,1fr)] gap-x-4 gap-y-1 ${estimate.isFetching || specForEstimate !== specForEstimateDebounced ? 'opacity-50' : ''}`}>
              <dt className="text-ink-soft">Domain</dt>
              <dd className="text-right">
                <Count n={est.cells} unit="cells" stacked />
                <span className="block font-mono text-[11px] text-ink-faint">{est.shape.map((d) => groupThousands(d)).join(' × ')}</span>
              </dd>
              <dt className="text-ink-soft">Memory</dt>
              <dd className="text-right tnum">{bytesText(est.bytes)}</dd>
              <dt className="text-ink-soft">Time</dt>
              <dd className="text-right tnum" data-testid="estimate-time">about {formatDuration(est.seconds)}</dd>
              <dt className="text-ink-soft">Drawing</dt>
              <dd className="text-right tnum" data-testid="estimate-pyramids">
                {est.pyramids} view{est.pyramids === 1 ? '' : 's'}, {formatDuration(est.renderSeconds)}
              </dd>
              <dt className="text-ink-soft">Credits</dt>
              <dd className="text-right font-semibold tnum" data-testid="estimate-credits">{est.credits.toLocaleString('en-US')}</dd>
            </dl>
          )}
          {/* an earlier answer stays in est while the form is incomplete: its warnings and credits no longer apply */}
          {specForEstimate ? est?.warnings.map((w) => (
            <p key={w} className="mt-2 rounded bg-amber-tint px-2 py-1 text-xs text-amber">
              {w}
            </p>
          )) : null}
          {est && specForEstimate && f.mode !== 'series' ? <CreditGate labId={labId} credits={est.credits} /> : null}
        </div>
        {/* every refusal of the submit shows here, also those naming no field of the form, unless the estimate box above already says it */}
        {submitRefusal ? (
          <FormError error={submitRefusal} />
        ) : errors.labId || errors.body ? (
          <FormError error={new Error(errors.labId ?? errors.body)} />
        ) : create.isError && shownAbove.includes(messageForPeople(create.error)) ? (
          // the refusal repeats the box above: point at it, so the click does not seem to do nothing
          <p role="status" className="text-right text-sm font-medium text-stamp" data-testid="refused-as-above">
            Not started: the check above says why.
          </p>
        ) : null}
        <div className="flex justify-end gap-3">
          {onClose ? (
            <Button tone="quiet" onClick={onClose}>
              Cancel
            </Button>
          ) : null}
          <Button type="submit" busy={create.isPending} busyLabel="Starting…">
            {f.mode === 'series' ? 'Start series' : 'Start run'}
          </Button>
        </div>
      </aside>
    </form>
  );
}

function SeriesHint({ text }: { text: string }) {
  const ns = parseGrainList(text);
  // a number past the largest count says so, rather than how to type a list
  if (ns.some((n) => n > MAX_CHIPS)) return <>each {CHIPS_TOO_LARGE_MESSAGE}</>;
  if (!ns.length || !ns.every(Number.isSafeInteger)) return <>separated by commas, e.g. 10^4, 10^5, 10^6</>;
  return <>{ns.length} runs: {ns.map((n, i) => <span key={i}>{i ? ', ' : ''}<Count n={n} /></span>)}</>;
}

import { Link, useSearchParams } from 'react-router';
import { useFigures, useMe } from '../api/queries.js';
import { FIGURES_PAGE_SIZE, LATTICE_PRESETS, type Figure } from '../api/contract.js';
import { backgroundKindName, backgroundOfSpec, latticeName } from '../labels.js';
import { formatDate, superscriptDigits } from '../format.js';
import { Count, EmptyState, ErrorPanel, LinkButton, PageHeading, Pager, SelectField, SkeletonTable, Thumbnail } from '../ui/index.js';
import { figurePicture } from '../thumbnails.js';

const BACKGROUND_KINDS = ['constant', 'checkerboard', 'motif', 'random', 'annuli', 'array'] as const;

/** Grain counts by decade, the way piles are compared: 10^k ≤ n < 10^(k+1). */
const N_BANDS = [2, 3, 4, 5, 6, 7, 8, 9].map((k) => ({ value: String(k), label: k === 9 ? 'n ≥ 10⁹' : `10${superscriptDigits(k)} ≤ n < 10${superscriptDigits(k + 1)}`, nMin: 10 ** k, nMax: k === 9 ? undefined : 10 ** (k + 1) - 1 }));

export function FiguresIndex() {
  const [params, setParams] = useSearchParams();
  const lattice = params.get('lattice') ?? '';
  const background = params.get('background') ?? '';
  const band = N_BANDS.find((b) => b.value === params.get('n')) ?? null;
  const page = Math.max(1, Number(params.get('page') ?? 1) || 1);
  const figures = useFigures({ lattice: lattice || undefined, background: background || undefined, nMin: band?.nMin, nMax: band?.nMax, page });
  const me = useMe();

  function set(name: string, value: string) {
    const next = new URLSearchParams(params);
    if (value) next.set(name, value);
    else next.delete(name);
    if (name !== 'page') next.delete('page');
    setParams(next);
  }

  return (
    <div>
      <PageHeading
        overline="Open to every reader"
        title="Published figures"
        lede="Figures labs have published with a permanent link. Open one to read its caption, zoom in and cite it."
        actions={me.data ? <LinkButton tone="quiet" to="/lab/figures">Your lab's figures</LinkButton> : undefined}
      />
      <div className="mb-6 grid grid-cols-1 gap-4 sm:flex sm:items-end">
        <SelectField label="Lattice" value={lattice} onChange={(e) => set('lattice', e.target.value)} fieldClassName="sm:w-52">
          <option value="">any lattice</option>
          {[...LATTICE_PRESETS, 'periodic'].map((l) => (
            <option key={l} value={l}>
              {latticeName(l)}
            </option>
          ))}
        </SelectField>
        <SelectField label="Background" value={background} onChange={(e) => set('background', e.target.value)} fieldClassName="sm:w-52">
          <option value="">any background</option>
          {BACKGROUND_KINDS.map((b) => (
            <option key={b} value={b}>
              {backgroundKindName(b)}
            </option>
          ))}
        </SelectField>
        <SelectField label="Grains" value={band?.value ?? ''} onChange={(e) => set('n', e.target.value)} fieldClassName="sm:w-52">
          <option value="">any n</option>
          {N_BANDS.map((b) => (
            <option key={b.value} value={b.value}>
              {b.label}
            </option>
          ))}
        </SelectField>
      </div>
      {figures.isPending ? (
        <SkeletonTable rows={4} columns={4} />
      ) : figures.isError ? (
        <ErrorPanel error={figures.error} />
      ) : figures.data.figures.length === 0 ? (
        <EmptyState title={lattice || background || band ? 'No figures match these filters' : 'Nothing published yet'}>
          {lattice || background || band ? 'Try another lattice, background or n.' : 'When a lab publishes a figure, it appears here with its permanent link.'}
        </EmptyState>
      ) : (
        <>
          <ol className="divide-y divide-rule-soft overflow-hidden rounded-lg border border-rule bg-sheet">
            {figures.data.figures.map((f) => (
              <FigureEntry key={f.id} figure={f} />
            ))}
          </ol>
          <Pager page={page} pageSize={FIGURES_PAGE_SIZE} total={figures.data.total} unit="figures" onPage={(p) => set('page', String(p))} />
        </>
      )}
    </div>
  );
}

function FigureEntry({ figure: f }: { figure: Figure }) {
  return (
    // on a phone the facts go under the title, beside the page's picture
    <li className="grid grid-cols-[auto_minmax(0,1fr)] gap-x-4 gap-y-3 px-4 py-4 hover:bg-paper/40 sm:grid-cols-[auto_minmax(0,1fr)_auto] sm:gap-6 sm:px-6 sm:py-5">
      {/* for the mouse only: the title is the entry's one link for the keyboard and screen readers */}
      <Link to={`/f/${f.slug}`} tabIndex={-1} aria-hidden="true" className="block w-fit self-start">
        <Thumbnail picture={figurePicture(f)} alt={`Page of ${f.title}`} size={128} ground="sheet" />
      </Link>
      <div className="min-w-0">
        <Link to={`/f/${f.slug}`} className="text-base font-semibold text-ink no-underline [overflow-wrap:anywhere] hover:text-press">
          {f.title}
        </Link>
        <p className="mt-1 line-clamp-2 max-w-3xl text-sm text-ink-soft">{f.caption}</p>
        <p className="mt-2 text-xs text-ink-faint">
          {f.authors.join(', ')} · {f.labName}
        </p>
      </div>
      <dl className="col-start-2 grid grid-cols-[auto_minmax(0,1fr)] content-start gap-x-4 gap-y-1 text-xs sm:col-start-auto sm:grid-cols-[auto_auto] sm:text-right">
        <dt className="text-ink-faint">grains</dt>
        <dd className="text-ink">
          <Count n={f.chips} />
        </dd>
        <dt className="text-ink-faint">lattice</dt>
        <dd className="text-ink">{latticeName(f.lattice)}</dd>
        <dt className="text-ink-faint">background</dt>
        <dd className="text-ink">{backgroundOfSpec(f.backgroundSpec)}</dd>
        <dt className="text-ink-faint">published</dt>
        <dd className="text-ink">{formatDate(f.publishedAt)}</dd>
      </dl>
    </li>
  );
}

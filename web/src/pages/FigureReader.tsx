import { lazy, Suspense } from 'react';
import { Link, useParams } from 'react-router';
import { useFigure, useRunJson, useViewDrawn } from '../api/queries.js';
import { isStatus } from '../api/ApiError.js';
import { backgroundOfSpec, latticeName } from '../labels.js';
import { formatDate } from '../format.js';
import { CitationBlock, Count, EmptyState, ErrorPanel, FactList, LinkButton, Notice, Section, SkeletonBlock } from '../ui/index.js';
import { figureBibtex } from './citation.js';
import { FileList } from './figures/FileList.js';

// OpenSeadragon comes with the viewer chunk, only when the figure has tiles to show
const FigureZoom = lazy(() => import('../viewer/FigureZoom.js').then((m) => ({ default: m.FigureZoom })));

/**
 * /f/:slug — the permanent link. Published: the latest ready version's files, the deep zoom of the
 * figure's run, the caption and a citation, with the earlier versions listed. Withdrawn: the link
 * still answers, saying so.
 */
export function FigureReader() {
  const { slug = '' } = useParams();
  const figure = useFigure(slug);
  const base = { kind: 'figure', slug } as const;
  const drawn = useViewDrawn(base, 'heights', 'tidewater', figure.isSuccess && !figure.data.withdrawn);
  const runJson = useRunJson(base, drawn.data === true);

  if (figure.isPending) return <SkeletonBlock lines={8} />;
  if (figure.isError) {
    if (isStatus(figure.error, 404)) {
      return (
        <EmptyState title="No figure at this link" action={<Link to="/figures">See published figures</Link>}>
          There is no figure here, or it is not published yet.
        </EmptyState>
      );
    }
    return <ErrorPanel error={figure.error} />;
  }

  if (figure.data.withdrawn) {
    return (
      <div data-testid="figure-withdrawn">
        <EmptyState title={`“${figure.data.title}” was withdrawn`} action={<Link to="/figures">See published figures</Link>}>
          Its authors withdrew this figure on {formatDate(figure.data.withdrawnAt)}. The permanent link stays reserved, so citations never point at something else.
        </EmptyState>
      </div>
    );
  }
  const f = figure.data.figure;
  const permalink = `${window.location.origin}/f/${f.slug}`;
  const ready = f.versions.filter((v) => v.status === 'ready');
  const latest = ready[0] ?? null;
  return (
    <article>
      <title>{`${f.title} · Toppleworks`}</title>
      <p className="text-xs font-semibold uppercase tracking-[0.14em] text-ink-faint">Figure · {f.labName}</p>
      <div className="mt-2 flex items-start justify-between gap-6">
        <div>
          <h1 className="text-3xl font-semibold tracking-tight">{f.title}</h1>
          <p className="mt-2 text-base text-ink-soft">{f.authors.join(', ')}</p>
        </div>
        {f.canEdit ? (
          <LinkButton tone="quiet" to={`/lab/figures/${f.slug}`}>
            Manage this figure
          </LinkButton>
        ) : null}
      </div>
      {f.withdrawnAt ? (
        <div className="mt-6">
          <Notice tone="warning" title={`Withdrawn on ${formatDate(f.withdrawnAt)}`}>
            Readers following the permanent link see that it was withdrawn; only members of {f.labName} see this page.
          </Notice>
        </div>
      ) : f.publishedAt === null ? (
        <div className="mt-6">
          <Notice tone="warning" title="Not published yet">
            Only members of {f.labName} can see this page until it is published.
          </Notice>
        </div>
      ) : null}
      {drawn.data ? (
        // full-bleed: the dark ground runs from edge to edge of the window
        <div className="relative left-1/2 mt-8 w-screen -translate-x-1/2" data-testid="figure-zoom">
          <Suspense fallback={<div className="h-[72vh] bg-night" />}>
            <FigureZoom slug={f.slug} title={f.title} />
          </Suspense>
        </div>
      ) : null}
      <div className="mt-8 grid grid-cols-[1.4fr_1fr] gap-8">
        <Section title="Caption">
          <p className="whitespace-pre-line text-[15px] leading-relaxed text-ink">{f.caption}</p>
        </Section>
        <Section title="The run">
          <FactList
            items={[
              { term: 'Grains at the origin', value: <Count n={f.chips} unit="grains" /> },
              { term: 'Lattice', value: latticeName(f.lattice) },
              { term: 'Background', value: backgroundOfSpec(f.backgroundSpec) },
              { term: 'Published', value: formatDate(f.publishedAt) },
            ]}
          />
        </Section>
      </div>
      <Section
        title={latest ? `Download version ${latest.number}` : 'Downloads'}
        className="mt-8"
        description={latest ? `Printed ${formatDate(latest.finishedAt)} at ${latest.spec.dpi} DPI. Check a download against its SHA-256.` : undefined}
      >
        {latest ? <FileList files={latest.files} /> : <p className="text-sm text-ink-soft">No print of this figure is ready yet.</p>}
        {ready.length > 1 ? (
          <div className="mt-6">
            <h3 className="text-sm font-semibold text-ink">Earlier versions</h3>
            <ul className="mt-2 flex flex-col gap-4" data-testid="figure-history">
              {ready.slice(1).map((v) => (
                <li key={v.number}>
                  <p className="text-sm text-ink-soft">
                    Version {v.number}, printed {formatDate(v.finishedAt)} at {v.spec.dpi} DPI
                  </p>
                  <FileList files={v.files} />
                </li>
              ))}
            </ul>
          </div>
        ) : null}
      </Section>
      <Section title="Cite this figure" className="mt-8" description="Permanent link and a BibTeX entry.">
        <p className="mb-3 text-sm">
          <a href={permalink} className="font-mono">
            {permalink}
          </a>
        </p>
        <CitationBlock testId="bibtex" text={figureBibtex(f, permalink, runJson.data ? { engineVersion: runJson.data.engineVersion, heightsSha256: runJson.data.heights.sha256 } : undefined)} />
      </Section>
    </article>
  );
}

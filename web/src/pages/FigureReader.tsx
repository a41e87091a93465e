import { lazy, Suspense } from 'react';
import { Link, useParams } from 'react-router';
import { useFigure, useRunJson, useViewDrawn } from '../api/queries.js';
import { isStatus } from '../api/ApiError.js';
import { backgroundOfSpec, latticeName } from '../labels.js';
import { formatDate } from '../format.js';
import { sliceText, slicesText } from '../../../shared/drawn-plane.js';
import { CitationBlock, Count, EmptyState, ErrorPanel, FactList, LinkButton, Notice, Section, SkeletonBlock } from '../ui/index.js';
import { figureBibtex } from './citation.js';
import { FileList } from './figures/FileList.js';
import { figureUrl, PermanentLink } from './figures/PermanentLink.js';
import { panelRuns } from './figures/panelRuns.js';
import { certificateSentence, certificateTone } from '../../../shared/certificate-words.js';
import type { FigureRun } from '../../../shared/api/figures.js';
import { infoJsonUrl } from '../viewer/runArtifacts.js';

/** The view a published figure's deep zoom shows: its heights in the default palette. */
const ZOOM_VIEW = ['heights', 'tidewater'] as const;

// OpenSeadragon comes with the viewer chunk, only when the figure has tiles to show
const FigureZoom = lazy(() => import('../viewer/FigureZoom.js').then((m) => ({ default: m.FigureZoom })));

/**
 * /f/:slug — the permanent link, and /f/:slug/v/:version — one published version, which never
 * changes. Published: that version's title, caption and files exactly as published, the deep zoom of
 * the figure's run and a citation of the version, with the other published versions listed. The
 * lab's later edits appear only once printed and published as a new version. Withdrawn: the link
 * still answers, saying so.
 */
export function FigureReader() {
  const { slug = '', version: versionParam } = useParams();
  const figure = useFigure(slug);
  const base = { kind: 'figure', slug } as const;
  const drawn = useViewDrawn(base, ...ZOOM_VIEW, figure.isSuccess && !figure.data.withdrawn);
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
  const published = f.versions.filter((v) => v.publishedAt !== null && v.status === 'ready');
  const asked = versionParam === undefined ? null : Number(versionParam);
  // the version this page shows: the one in the address, else the newest published; before
  // publishing, the lab previews its newest print with the draft's words
  const shown = asked === null ? (published[0] ?? null) : (published.find((v) => v.number === asked) ?? null);
  if (asked !== null && !shown) {
    return (
      <EmptyState title={`No published version ${versionParam} of this figure`} action={<Link to={`/f/${f.slug}`}>See the figure as published now</Link>}>
        The permanent link of “{f.title}” answers, but no version with that number was published.
      </EmptyState>
    );
  }
  const preview = shown ? null : (f.versions.find((v) => v.status === 'ready') ?? null);
  const latest = shown ?? preview;
  const title = shown ? shown.title : f.title;
  const caption = shown ? shown.caption : f.caption;
  const newest = published[0] ?? null;
  const dimension = runJson.data?.heights.shape.length ?? (f.lattice === 'cubic' ? 3 : f.lattice === 'line' ? 1 : 2);
  // a citation names one version, whose link shows exactly what was cited for good
  const permalink = shown ? figureUrl(f.slug, shown.number) : figureUrl(f.slug);
  const others = published.filter((v) => v !== shown);
  // the runs of the panels as shown (the published composition), each with its certificate
  const sources = panelRuns(latest?.spec ?? f.spec, f.runs);
  const iiifUrl = `${window.location.origin}${infoJsonUrl(base, ...ZOOM_VIEW)}`;
  return (
    <article>
      <title>{`${title} · Toppleworks`}</title>
      <p className="text-xs font-semibold uppercase tracking-[0.14em] text-ink-faint">Figure · {f.labName}</p>
      <div className="mt-2 flex flex-wrap items-start justify-between gap-x-6 gap-y-3">
        <div className="min-w-0">
          <h1 className="text-2xl font-semibold tracking-tight [overflow-wrap:anywhere] sm:text-3xl">{title}</h1>
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
      ) : shown && newest && shown !== newest ? (
        <div className="mt-6" data-testid="older-version">
          <Notice tone="info" title={`Version ${shown.number}, as published on ${formatDate(shown.publishedAt)}`}>
            A newer version was published: <Link to={`/f/${f.slug}`}>version {newest.number}</Link>.
          </Notice>
        </div>
      ) : f.canEdit && f.unpublishedChanges ? (
        <div className="mt-6">
          <Notice tone="info" title="Changes not yet published">
            Readers see version {shown?.number} as published; the lab's later edits appear here once printed and published as a new version.
          </Notice>
        </div>
      ) : null}
      {drawn.data ? (
        // full-bleed: the dark ground runs from edge to edge of the window
        <div className="relative left-1/2 mt-8 w-screen -translate-x-1/2" data-testid="figure-zoom">
          <Suspense fallback={<div className="h-[72vh] bg-night" />}>
            <FigureZoom slug={f.slug} title={title} />
          </Suspense>
        </div>
      ) : null}
      {/* a figure without a caption gives its runs the whole width instead of an empty box */}
      <div className={`mt-8 grid grid-cols-1 gap-8 ${caption.trim() ? 'md:grid-cols-[1.4fr_1fr]' : ''}`}>
        {caption.trim() ? (
          <Section title="Caption">
            <p className="whitespace-pre-line text-[15px] leading-relaxed text-ink" data-testid="figure-caption">
              {caption}
            </p>
          </Section>
        ) : null}
        <Section title={sources.length > 1 ? 'The runs' : 'The run'}>
          <FactList
            items={[
              // several runs: each panel's line says its own n, lattice and background instead
              ...(sources.length > 1
                ? []
                : [
                    { term: 'Grains at the origin', value: <Count n={f.chips} unit="grains" /> },
                    { term: 'Lattice', value: latticeName(f.lattice) },
                  ]),
              // a cubic pile is shown in 2-D slices: say which, in the print and in the deep zoom (the source's slice)
              ...(dimension === 3
                ? [
                    { term: 'Printed', value: <span data-testid="figure-slices">{slicesText(latest ? latest.spec.panels.map((p) => p.z ?? 0) : [0])}</span> },
                    ...(drawn.data ? [{ term: 'Deep zoom', value: sliceText(0) }] : []),
                  ]
                : []),
              ...(sources.length > 1 ? [] : [{ term: 'Background', value: backgroundOfSpec(f.backgroundSpec) }]),
              { term: shown ? `Version ${shown.number} published` : 'Published', value: formatDate(shown?.publishedAt ?? f.publishedAt) },
              // one run: its certificate; several: each run's facts and certificate under the labels of its panels
              ...(sources.length === 1
                ? [{ term: 'Certificate', value: <CertificateVerdict run={sources[0]!.run} /> }]
                : sources.map((p) => ({
                    term: `${p.panels.length > 1 ? 'Panels' : 'Panel'} ${p.panels.join(', ')}`,
                    value: (
                      <>
                        <Count n={p.run.chips} unit="grains" /> on {latticeName(p.run.lattice)}, {p.run.background} background
                        <br />
                        <CertificateVerdict run={p.run} />
                      </>
                    ),
                  }))),
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
        {others.length > 0 ? (
          <div className="mt-6">
            <h3 className="text-sm font-semibold text-ink">Other published versions</h3>
            <ul className="mt-2 flex flex-col gap-4" data-testid="figure-history">
              {others.map((v) => (
                <li key={v.number}>
                  <p className="text-sm text-ink-soft">
                    <Link to={`/f/${f.slug}/v/${v.number}`}>Version {v.number}</Link>, “{v.title}”, published {formatDate(v.publishedAt)}, printed at {v.spec.dpi} DPI
                  </p>
                  <FileList files={v.files} />
                </li>
              ))}
            </ul>
          </div>
        ) : null}
      </Section>
      <Section
        title={shown ? `Cite version ${shown.number}` : 'Cite this figure'}
        className="mt-8"
        description={shown ? 'This version\'s link shows exactly what is cited, for good; the figure\'s own link always shows its newest published version.' : 'Permanent link and a BibTeX entry.'}
      >
        <div className="mb-3 flex flex-col gap-2">
          <PermanentLink url={permalink} testId="figure-cite-link" />
          {shown ? (
            <p className="text-sm text-ink-soft">
              Newest version: <a href={figureUrl(f.slug)} className="font-mono">{figureUrl(f.slug)}</a>
            </p>
          ) : null}
          {drawn.data ? (
            // the deep zoom's own tiles, for a IIIF viewer, a slide deck or a digital edition
            <p className="text-sm text-ink-soft">
              Deep zoom for any IIIF viewer (Image API 3.0):{' '}
              <a href={iiifUrl} className="font-mono [overflow-wrap:anywhere]" data-testid="figure-iiif">
                {iiifUrl}
              </a>
            </p>
          ) : null}
        </div>
        <CitationBlock
          testId="bibtex"
          text={figureBibtex({ ...f, title, publishedAt: shown?.publishedAt ?? f.publishedAt }, permalink, runJson.data ? { engineVersion: runJson.data.engineVersion, heightsSha256: runJson.data.heights.sha256 } : undefined, shown?.number)}
        />
      </Section>
    </article>
  );
}

const VERDICT_TONE = { passed: 'text-leaf', failed: 'text-stamp', none: 'text-ink-soft' } as const;

/** One line a reader can cite: whether the run behind a panel is certified exact, and how it was computed. */
function CertificateVerdict({ run }: { run: FigureRun }) {
  const tone = certificateTone(run.certificate);
  return (
    <span data-testid="figure-certificate" data-verdict={tone} className={VERDICT_TONE[tone]}>
      {certificateSentence(run.certificate)}
    </span>
  );
}

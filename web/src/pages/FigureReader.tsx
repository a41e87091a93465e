import { Link, useParams } from 'react-router';
import { useFigure } from '../api/queries.js';
import { isStatus } from '../api/ApiError.js';
import type { Figure } from '../api/contract.js';
import { backgroundKindName, latticeName } from '../labels.js';
import { formatDate } from '../format.js';
import { Count, EmptyState, ErrorPanel, FactList, Notice, Section, SkeletonBlock } from '../ui/index.js';
import { figureBibtex } from './citation.js';

/**
 * The contract's figure has no withdrawal field yet (the API answers 404 to readers); if the API adds
 * `withdrawnAt` for lab members, the page says so.
 */
function withdrawnAt(f: Figure): string | null {
  const v = (f as Figure & { withdrawnAt?: unknown }).withdrawnAt;
  return typeof v === 'string' ? v : null;
}

export function FigureReader() {
  const { slug = '' } = useParams();
  const figure = useFigure(slug);

  if (figure.isPending) return <SkeletonBlock lines={8} />;
  if (figure.isError) {
    if (isStatus(figure.error, 410)) {
      return (
        <EmptyState title="This figure was withdrawn" action={<Link to="/figures">See published figures</Link>}>
          Its authors took it down. The permanent link stays reserved so citations do not point at something else.
        </EmptyState>
      );
    }
    if (isStatus(figure.error, 404)) {
      return (
        <EmptyState title="No figure at this link" action={<Link to="/figures">See published figures</Link>}>
          The figure may have been withdrawn, or it is not published yet.
        </EmptyState>
      );
    }
    return <ErrorPanel error={figure.error} />;
  }

  const f = figure.data.figure;
  const permalink = `${window.location.origin}/f/${f.slug}`;
  return (
    <article>
      <title>{`${f.title} · Toppleworks`}</title>
      <p className="text-xs font-semibold uppercase tracking-[0.14em] text-ink-faint">Figure · {f.labName}</p>
      <h1 className="mt-2 text-3xl font-semibold tracking-tight">{f.title}</h1>
      <p className="mt-2 text-base text-ink-soft">{f.authors.join(', ')}</p>
      {withdrawnAt(f) ? (
        <div className="mt-6">
          <Notice tone="warning" title={`Withdrawn on ${formatDate(withdrawnAt(f))}`}>
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
      <div className="mt-8 grid grid-cols-[1.4fr_1fr] gap-8">
        <Section title="Caption">
          <p className="whitespace-pre-line text-[15px] leading-relaxed text-ink">{f.caption}</p>
        </Section>
        <Section title="The run">
          <FactList
            items={[
              { term: 'Grains at the origin', value: <Count n={f.chips} unit="grains" /> },
              { term: 'Lattice', value: latticeName(f.lattice) },
              { term: 'Background', value: backgroundKindName(f.background) },
              { term: 'Published', value: formatDate(f.publishedAt) },
            ]}
          />
        </Section>
      </div>
      <Section title="Cite this figure" className="mt-8" description="Permanent link and a BibTeX entry.">
        <p className="mb-3 text-sm">
          <a href={permalink} className="font-mono">
            {permalink}
          </a>
        </p>
        <pre className="overflow-x-auto rounded-md border border-rule-soft bg-paper px-4 py-3 font-mono text-xs leading-relaxed text-ink">
          {figureBibtex(f, permalink)}
        </pre>
      </Section>
    </article>
  );
}

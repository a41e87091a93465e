import { Link } from 'react-router';
import { useLabFigures, useMe } from '../../api/queries.js';
import { latticeName } from '../../labels.js';
import { formatDate } from '../../format.js';
import { Count, EmptyState, ErrorPanel, LinkButton, PageHeading, ScrollFrame, SkeletonTable, Thumbnail } from '../../ui/index.js';
import { figurePicture } from '../../thumbnails.js';

/** /lab/figures — the active lab's figures: drafts, printing, published and withdrawn. */
export function LabFigures() {
  const me = useMe();
  const labId = me.data?.activeLabId ?? null;
  const list = useLabFigures(labId);
  const lab = me.data?.labs.find((l) => l.id === labId);
  return (
    <div>
      <PageHeading
        overline={lab?.name ?? 'Your lab'}
        title="Figures"
        lede="Compose figures from finished runs, order prints at an exact size, and publish them with a permanent link."
        actions={<LinkButton to="/figures/new">Compose a figure</LinkButton>}
      />
      {!labId ? (
        <EmptyState title="No lab yet">Join or create a lab first.</EmptyState>
      ) : list.isPending ? (
        <SkeletonTable rows={3} columns={6} />
      ) : list.isError ? (
        <ErrorPanel error={list.error} />
      ) : list.data.figures.length === 0 ? (
        <EmptyState title="No figures yet" action={<LinkButton to="/figures/new">Compose a figure</LinkButton>}>
          A figure takes one or more finished runs to an exact physical size and resolution.
        </EmptyState>
      ) : (
        // a narrow screen scrolls the table inside its frame, not the page
        <ScrollFrame className="rounded-lg border border-rule bg-sheet">
          <table className="w-full text-sm">
            <thead>
              <tr className="border-b border-rule text-left text-xs uppercase tracking-wider text-ink-faint">
                <th className="w-32 px-4 py-2 font-medium">
                  <span className="sr-only">picture</span>
                </th>
                <th className="px-4 py-2 font-medium">title</th>
                <th className="px-4 py-2 font-medium">run</th>
                <th className="px-4 py-2 text-right font-medium">n</th>
                <th className="px-4 py-2 font-medium">print</th>
                <th className="px-4 py-2 font-medium">link</th>
              </tr>
            </thead>
            <tbody>
              {list.data.figures.map((f) => (
                <tr key={f.id} className="border-b border-rule-soft last:border-b-0">
                  <td className="px-4 py-2.5">
                    {/* for the mouse only: the title is the row's one link for the keyboard and screen readers */}
                    <Link to={`/lab/figures/${f.slug}`} tabIndex={-1} aria-hidden="true" className="block w-fit">
                      <Thumbnail picture={figurePicture(f)} alt={`Page of ${f.title}`} ground="sheet" />
                    </Link>
                  </td>
                  <td className="px-4 py-2.5">
                    <Link to={`/lab/figures/${f.slug}`} className="font-medium">
                      {f.title}
                    </Link>
                    <div className="font-mono text-xs text-ink-faint">/f/{f.slug}</div>
                  </td>
                  <td className="px-4 py-2.5 text-ink-soft">{latticeName(f.lattice)}</td>
                  <td className="px-4 py-2.5 text-right">
                    <Count n={f.chips} />
                  </td>
                  <td className="px-4 py-2.5 text-ink-soft">{f.latestVersion ? `version ${f.latestVersion} ready` : f.newestStatus ? f.newestStatus : 'not ordered'}</td>
                  <td className="px-4 py-2.5 text-ink-soft">{f.withdrawnAt ? `withdrawn ${formatDate(f.withdrawnAt)}` : f.publishedAt ? `published ${formatDate(f.publishedAt)}${f.publishedVersion ? `, readers see version ${f.publishedVersion}` : ''}` : 'private'}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </ScrollFrame>
      )}
    </div>
  );
}

import { Link, Navigate, useParams } from 'react-router';
import { isAddressMissing } from '../../api/ApiError.js';
import type { FigureVersion } from '../../api/contract.js';
import { useFigureLive, useMe, useOrderPrint, usePublishFigure } from '../../api/queries.js';
import { formatDateTime } from '../../format.js';
import { Button, EmptyState, ErrorPanel, FormError, LinkButton, Notice, PageHeading, Section, SkeletonBlock } from '../../ui/index.js';
import { FileList } from './FileList.js';
import { figureUrl, PermanentLink } from './PermanentLink.js';
import { readerFor } from './readerFor.js';
import { VERSION_STATUS_WORDS, versionEndedText } from './versionWords.js';


function sizeText(v: FigureVersion): string {
  const s = v.spec.size;
  const what = s.kind === 'paper' ? `${s.paper} ${s.orientation}` : s.kind === 'column' ? `${s.column} column` : `${s.width} × ${s.height} ${s.unit}`;
  return `${what}, ${v.spec.dpi} DPI, ${v.spec.panels.length} ${v.spec.panels.length === 1 ? 'panel' : 'panels'}`;
}

/** /lab/figures/:slug — the lab's page of one figure: order prints, see versions and files, publish. */
export function FigurePage() {
  const { slug = '' } = useParams();
  const q = useFigureLive(slug);
  const order = useOrderPrint(slug);
  const publish = usePublishFigure(slug);
  const me = useMe();
  if (q.isPending || me.isPending) return <SkeletonBlock lines={8} />;
  if (q.isError) {
    // a draft of another lab is a 404, as a mistyped slug: the same words as the composer's "No figure to edit here"
    if (isAddressMissing(q.error)) {
      return (
        <EmptyState title="No figure at this address" action={<Link to="/lab/figures">Your lab's figures</Link>}>
          It may belong to a lab you are not a member of, or the link is mistyped.
        </EmptyState>
      );
    }
    return <ErrorPanel error={q.error} />;
  }
  if (q.data.withdrawn) return <EmptyState title="Withdrawn">This figure was withdrawn and you are not a member of its lab.</EmptyState>;
  const f = q.data.figure;
  const reader = readerFor(f, me.data ?? null);
  if (reader) return <Navigate to={reader} replace />;
  const shown = f.publishedAt !== null && f.withdrawnAt === null;
  const busy = f.versions.some((v) => v.status === 'queued' || v.status === 'printing');
  const ready = f.versions.find((v) => v.status === 'ready');
  // publishing takes the newest ready print; offered while it is not what readers see already
  const publishable = ready && !(shown && ready.publishedAt) ? ready : null;
  const draft = f.versions.find((v) => v.number === f.draftVersion);
  function unpublish() {
    const ask = `Withdraw “${f.title}”? Readers following its permanent link, or a citation of it, will see only that it was withdrawn, with no image, files or caption; it also leaves the public index. The lab keeps every version, and publishing again brings the link back.`;
    if (confirm(ask)) publish.mutate(false);
  }
  return (
    <div>
      <PageHeading
        overline={`Figure · ${f.labName}`}
        title={f.title}
        lede={f.caption || undefined}
        actions={
          f.canEdit ? (
            <>
              <LinkButton tone="quiet" to={`/lab/figures/${f.slug}/edit`}>
                Edit the composition
              </LinkButton>
              <Button onClick={() => order.mutate({})} busy={order.isPending} busyLabel="Ordering…">
                {f.versions.length ? 'Print again' : 'Order the print'}
              </Button>
            </>
          ) : null
        }
      />
      <FormError error={order.error ?? publish.error} />
      <div className="grid grid-cols-1 items-start gap-8 lg:grid-cols-[minmax(0,1.6fr)_minmax(0,1fr)]">
        <Section title="Versions" description="Each order prints the title, caption and composition as they are then; the permanent link shows the newest published version, and earlier published versions keep links of their own.">
          {f.versions.length === 0 ? (
            <p className="text-sm text-ink-soft">Nothing ordered yet. Order the print to make the PNG, TIFF and PDF files.</p>
          ) : (
            <ol className="flex flex-col gap-6">
              {f.versions.map((v) => (
                <li key={v.number} data-testid={`version-${v.number}`} className="border-b border-rule-soft pb-5 last:border-b-0">
                  <div className="flex items-baseline justify-between gap-4">
                    <h3 className="text-base font-semibold">
                      Version {v.number} <span className="ml-2 text-sm font-normal text-ink-soft">{sizeText(v)}</span>
                    </h3>
                    <span className={`text-sm font-medium ${v.status === 'ready' ? 'text-leaf' : v.status === 'failed' ? 'text-stamp' : 'text-amber'}`} data-testid={`version-${v.number}-status`}>
                      {VERSION_STATUS_WORDS[v.status]}
                    </span>
                  </div>
                  <p className="mt-1 text-xs text-ink-faint">
                    ordered {formatDateTime(v.createdAt)}
                    {v.orderedBy ? ` by ${v.orderedBy}` : ''}
                    {v.finishedAt ? ` · ${versionEndedText(v, formatDateTime)}` : ''}
                    {v.stage ? ` · ${v.stage}` : ''}
                    {v.publishedAt ? ` · published ${formatDateTime(v.publishedAt)}` : ''}
                  </p>
                  {v.number === f.publishedVersion && f.withdrawnAt === null ? (
                    <p className="mt-1 text-xs font-medium text-leaf" data-testid={`version-${v.number}-shown`}>
                      readers see this version
                    </p>
                  ) : null}
                  {v.error ? <p className="mt-2 text-sm text-stamp">{v.error}</p> : null}
                  {v.files.length ? (
                    <div className="mt-3">
                      <FileList files={v.files} />
                    </div>
                  ) : null}
                </li>
              ))}
            </ol>
          )}
        </Section>
        <Section title="Publishing">
          {shown ? (
            <Notice tone="success" title={`Published · readers see version ${f.publishedVersion ?? '?'}`}>
              <p className="mb-2">Anyone with the link can read, zoom into, download and cite it:</p>
              <PermanentLink url={figureUrl(f.slug)} testId="figure-permalink" />
            </Notice>
          ) : f.withdrawnAt ? (
            <Notice tone="warning" title={`Withdrawn on ${formatDateTime(f.withdrawnAt)}`}>
              The permanent link tells readers the figure was withdrawn. Publish it again to bring it back.
            </Notice>
          ) : (
            <Notice tone="info" title="Private to the lab">
              Only members of {f.labName} see it. {ready ? 'Publish it to give readers the permanent link.' : 'Publishing needs a ready print.'}
            </Notice>
          )}
          {f.canEdit && f.unpublishedChanges ? (
            <div className="mt-3" data-testid="unpublished-changes">
              <Notice tone="warning" title="Changes not yet published">
                The title, caption or composition changed after version {f.publishedVersion} was published; readers still see version {f.publishedVersion} as it was.{' '}
                {draft
                  ? draft.status === 'ready'
                    ? `Version ${draft.number} has the changes: publish it to show them.`
                    : `Version ${draft.number} has the changes and is ${VERSION_STATUS_WORDS[draft.status]}; publish it once it is ready.`
                  : 'Print again, then publish the new version to show them.'}
              </Notice>
            </div>
          ) : null}
          {f.canEdit ? (
            <div className="mt-4 flex flex-wrap gap-3">
              {publishable ? (
                <Button onClick={() => publish.mutate(true)} busy={publish.isPending && publish.variables === true}>
                  {`Publish version ${publishable.number}`}
                </Button>
              ) : !shown ? (
                <Button disabled>Publish</Button>
              ) : null}
              {shown ? (
                <Button tone="danger" onClick={unpublish} busy={publish.isPending && publish.variables === false}>
                  Unpublish
                </Button>
              ) : null}
              <LinkButton tone="quiet" to={`/f/${f.slug}`}>
                Open the reader page
              </LinkButton>
            </div>
          ) : null}
          {busy ? <p className="mt-4 text-sm text-ink-soft">A print is on the farm; this page updates by itself, and a mail with the download links follows.</p> : null}
        </Section>
      </div>
    </div>
  );
}

import type { AdminStorageResponse } from '../../api/contract.js';
import { formatDate, groupThousands } from '../../format.js';
import { Button, EmptyState, ErrorPanel, FileSize, FormError, Notice, Section, SkeletonTable, SortableTable, type Column } from '../../ui/index.js';
import { useAdminStorage, useRetentionNotice } from './adminQueries.js';

type LabStorage = AdminStorageResponse['labs'][number];

function NoticeButton({ lab }: { lab: LabStorage }) {
  const notice = useRetentionNotice();
  const pending = lab.runs.filter((r) => r.expiresAt && !r.noticeMailedAt).length;
  if (lab.dueForNotice === 0) return <span className="text-ink-faint">—</span>;
  return (
    <div>
      <Button size="sm" tone="quiet" busy={notice.isPending} disabled={pending === 0} onClick={() => notice.mutate(lab.labId)}>Mail the managers</Button>
      {notice.isError ? <FormError error={notice.error} /> : null}
      {notice.data ? <p className="text-xs text-ink-soft">mailed {notice.data.mailedTo.join(', ')}</p> : null}
    </div>
  );
}

const columns: Column<LabStorage>[] = [
  { key: 'name', header: 'Lab', cell: (l) => <span className="font-medium">{l.name}</span>, sortValue: (l) => l.name.toLowerCase() },
  { key: 'bytes', header: 'Stored', align: 'right', cell: (l) => <FileSize bytes={l.bytes} />, sortValue: (l) => l.bytes },
  { key: 'published', header: 'Published runs', align: 'right', cell: (l) => <FileSize bytes={l.publishedBytes} />, sortValue: (l) => l.publishedBytes },
  { key: 'unpublished', header: 'Unpublished runs', align: 'right', cell: (l) => <FileSize bytes={l.unpublishedBytes} />, sortValue: (l) => l.unpublishedBytes },
  { key: 'due', header: 'Near their end', align: 'right', cell: (l) => groupThousands(l.dueForNotice), sortValue: (l) => l.dueForNotice },
  { key: 'notice', header: '', cell: (l) => <NoticeButton lab={l} /> },
];

export function StorageTab() {
  const storage = useAdminStorage();
  if (storage.isPending) return <SkeletonTable rows={3} columns={5} />;
  if (storage.isError) return <ErrorPanel error={storage.error} />;
  const { rule, labs } = storage.data;
  const expiring = labs.flatMap((l) => l.runs.filter((r) => r.expiresAt).map((r) => ({ ...r, labName: l.name })));
  const removed = labs.flatMap((l) => l.runs.filter((r) => r.artifactsExpiredAt).map((r) => ({ ...r, labName: l.name })));
  return (
    <div className="space-y-8">
      <Notice title="Retention of unpublished runs">
        Tiles and arrays of a run that no figure publishes are kept for {rule.keepDays} days after the run ends. {rule.noticeDays} days before the end the lab’s
        managers are mailed; at the end (never sooner than {rule.noticeDays} days after the mail) an hourly sweep deletes the tiles, arrays and draft prints, while
        the run, its statistics and its specification stay, so it can be computed again. Runs of a figure that was ever published are kept for good.
      </Notice>
      <Section title="Storage per lab">
        {labs.length === 0 ? <EmptyState title="No labs yet" /> : <SortableTable caption="storage" columns={columns} rows={labs} rowKey={(l) => l.labId} initialSort={{ key: 'bytes', order: 'desc' }} />}
      </Section>
      <Section title="Unpublished runs and their end">
        {expiring.length === 0 ? (
          <EmptyState title="No finished unpublished run holds artifacts" />
        ) : (
          <SortableTable
            caption="retention"
            rows={expiring}
            rowKey={(r) => r.runId}
            initialSort={{ key: 'expires', order: 'asc' }}
            columns={[
              { key: 'title', header: 'Run', cell: (r) => <a href={`/runs/${r.runId}`}>{r.title}</a>, sortValue: (r) => r.title.toLowerCase() },
              { key: 'lab', header: 'Lab', cell: (r) => r.labName, sortValue: (r) => r.labName },
              { key: 'bytes', header: 'Stored', align: 'right', cell: (r) => <FileSize bytes={r.bytes} />, sortValue: (r) => r.bytes },
              { key: 'expires', header: 'Cleared on', cell: (r) => formatDate(r.expiresAt), sortValue: (r) => r.expiresAt },
              { key: 'mailed', header: 'Lab mailed', cell: (r) => formatDate(r.noticeMailedAt), sortValue: (r) => r.noticeMailedAt },
            ]}
          />
        )}
      </Section>
      {removed.length > 0 ? (
        <Section title="Expired — artifacts removed">
          <SortableTable
            caption="expired runs"
            rows={removed}
            rowKey={(r) => r.runId}
            initialSort={{ key: 'removed', order: 'desc' }}
            columns={[
              { key: 'title', header: 'Run', cell: (r) => <a href={`/runs/${r.runId}`}>{r.title}</a>, sortValue: (r) => r.title.toLowerCase() },
              { key: 'lab', header: 'Lab', cell: (r) => r.labName, sortValue: (r) => r.labName },
              { key: 'mailed', header: 'Lab mailed', cell: (r) => formatDate(r.noticeMailedAt), sortValue: (r) => r.noticeMailedAt },
              { key: 'removed', header: 'Removed on', cell: (r) => formatDate(r.artifactsExpiredAt), sortValue: (r) => r.artifactsExpiredAt },
            ]}
          />
        </Section>
      ) : null}
    </div>
  );
}

import { Fragment } from 'react';
import { useOutbox } from '../api/queries.js';
import type { OutboxMessage } from '../api/contract.js';
import { formatDateTime } from '../format.js';
import { EmptyState, ErrorPanel, Notice, PageHeading, SkeletonBlock } from '../ui/index.js';
import { isStatus } from '../api/ApiError.js';

const URL_PATTERN = /(https?:\/\/[^\s<>"')]+)/g;

/** Plain mail text with every address turned into a link, so a developer can follow it. */
function Linkified({ text }: { text: string }) {
  const parts = text.split(URL_PATTERN);
  return (
    <>
      {parts.map((p, i) =>
        i % 2 === 1 ? (
          <a key={i} href={p} className="break-all">
            {p}
          </a>
        ) : (
          <Fragment key={i}>{p}</Fragment>
        ),
      )}
    </>
  );
}

export function DevOutbox() {
  const outbox = useOutbox(true);
  return (
    <div>
      <PageHeading
        overline="Development only"
        title="Outbox"
        lede="Mails the local SMTP fake caught, newest first. Follow a link to confirm an address or reset a password."
      />
      {outbox.isPending ? (
        <SkeletonBlock lines={6} />
      ) : outbox.isError ? (
        isStatus(outbox.error, 404) ? (
          <Notice tone="info" title="No outbox here">
            This server runs in production mode, where mails go out for real and nothing is captured.
          </Notice>
        ) : (
          <ErrorPanel error={outbox.error} />
        )
      ) : outbox.data.messages.length === 0 ? (
        <EmptyState title="No mail yet">Sign up, ask for a password reset or invite someone, and the mail shows up here.</EmptyState>
      ) : (
        <ul className="space-y-4">
          {[...outbox.data.messages]
            .sort((a, b) => b.date.localeCompare(a.date))
            .map((m) => (
              <MailCard key={m.id} message={m} />
            ))}
        </ul>
      )}
    </div>
  );
}

function MailCard({ message: m }: { message: OutboxMessage }) {
  return (
    <li className="rounded-lg border border-rule bg-sheet px-6 py-4" data-testid="outbox-message">
      <div className="flex items-baseline justify-between gap-6">
        <p className="font-semibold text-ink">{m.subject}</p>
        <p className="shrink-0 text-xs text-ink-faint tnum">{formatDateTime(m.date)}</p>
      </div>
      <p className="mt-0.5 text-xs text-ink-soft">
        to <span className="font-mono">{m.to.join(', ')}</span> · from <span className="font-mono">{m.from}</span>
      </p>
      <pre className="mt-3 whitespace-pre-wrap font-sans text-sm leading-relaxed text-ink">
        <Linkified text={m.text} />
      </pre>
    </li>
  );
}

import type { RunStatus } from '../api/contract.js';
import { runStatusWord } from '../labels.js';

const tint: Record<RunStatus, string> = {
  queued: 'bg-rule-soft text-ink-soft',
  computing: 'bg-press-tint text-press',
  rendering: 'bg-press-tint text-press',
  finished: 'bg-leaf-tint text-leaf',
  failed: 'bg-stamp-tint text-stamp',
  cancelled: 'bg-amber-tint text-amber',
};

export function StatusBadge({ status }: { status: RunStatus }) {
  return <span className={`inline-flex items-center rounded-full px-2 py-0.5 text-xs font-medium ${tint[status]}`}>{runStatusWord(status)}</span>;
}

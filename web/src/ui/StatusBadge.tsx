import type { RunStatus } from '../api/contract.js';

const look: Record<RunStatus, { label: string; cls: string }> = {
  queued: { label: 'waiting', cls: 'bg-rule-soft text-ink-soft' },
  computing: { label: 'toppling', cls: 'bg-press-tint text-press' },
  rendering: { label: 'drawing', cls: 'bg-press-tint text-press' },
  finished: { label: 'done', cls: 'bg-leaf-tint text-leaf' },
  failed: { label: 'failed', cls: 'bg-stamp-tint text-stamp' },
  cancelled: { label: 'cancelled', cls: 'bg-amber-tint text-amber' },
};

export function statusLabel(s: RunStatus): string {
  return look[s].label;
}

export function StatusBadge({ status }: { status: RunStatus }) {
  const { label, cls } = look[status];
  return <span className={`inline-flex items-center rounded-full px-2 py-0.5 text-xs font-medium ${cls}`}>{label}</span>;
}

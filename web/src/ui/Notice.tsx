import type { ReactNode } from 'react';

type Tone = 'info' | 'success' | 'warning';
const tones: Record<Tone, string> = {
  info: 'border-press/25 bg-press-tint/70 text-ink',
  success: 'border-leaf/30 bg-leaf-tint text-ink',
  warning: 'border-amber/30 bg-amber-tint text-ink',
};

export function Notice({ tone = 'info', title, children }: { tone?: Tone; title?: ReactNode; children?: ReactNode }) {
  return (
    <div role="status" className={`rounded-lg border px-5 py-4 text-sm ${tones[tone]}`}>
      {title ? <p className="font-semibold">{title}</p> : null}
      {children ? <div className={title ? 'mt-1 text-ink-soft' : ''}>{children}</div> : null}
    </div>
  );
}

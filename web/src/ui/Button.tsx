import type { ButtonHTMLAttributes, ReactNode } from 'react';
import { Link, type LinkProps } from 'react-router';

type Tone = 'primary' | 'quiet' | 'danger';

const base =
  'inline-flex items-center justify-center gap-2 rounded-md px-4 py-2 text-sm font-medium transition-colors ' +
  'disabled:cursor-not-allowed disabled:opacity-50 whitespace-nowrap';
const tones: Record<Tone, string> = {
  primary: 'bg-press text-sheet hover:bg-press-dark shadow-sm',
  quiet: 'border border-rule bg-sheet text-ink hover:border-ink-faint hover:bg-paper',
  danger: 'border border-stamp/40 bg-sheet text-stamp hover:bg-stamp-tint',
};
const small = 'px-2.5 py-1 text-xs';

export function buttonClass(tone: Tone = 'primary', size: 'md' | 'sm' = 'md'): string {
  return `${base} ${tones[tone]} ${size === 'sm' ? small : ''}`;
}

interface ButtonProps extends ButtonHTMLAttributes<HTMLButtonElement> {
  tone?: Tone;
  size?: 'md' | 'sm';
  /** shows the busy label and blocks double submits */
  busy?: boolean;
  busyLabel?: ReactNode;
}

export function Button({ tone = 'primary', size = 'md', busy, busyLabel, children, className = '', disabled, type = 'button', ...rest }: ButtonProps) {
  return (
    <button type={type} className={`${buttonClass(tone, size)} ${className}`} disabled={disabled || busy} aria-busy={busy || undefined} {...rest}>
      {busy ? (busyLabel ?? children) : children}
    </button>
  );
}

export function LinkButton({ tone = 'primary', size = 'md', className = '', ...rest }: LinkProps & { tone?: Tone; size?: 'md' | 'sm' }) {
  return <Link className={`${buttonClass(tone, size)} no-underline ${className}`} {...rest} />;
}

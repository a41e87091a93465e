import { useRef } from 'react';
import { CopyButton } from '../../ui/index.js';

/** The full address of a figure's permanent link (or of one version), with the design system's Copy. */
export const figureUrl = (slug: string, version?: number): string => `${window.location.origin}/f/${slug}${version ? `/v/${version}` : ''}`;

export function PermanentLink({ url, testId }: { url: string; testId?: string }) {
  const link = useRef<HTMLAnchorElement>(null);
  return (
    <div className="flex items-start gap-3">
      <a ref={link} href={url} className="min-w-0 font-mono text-sm [overflow-wrap:anywhere]" data-testid={testId}>
        {url}
      </a>
      <CopyButton text={url} target={link} className="shrink-0" />
    </div>
  );
}

import { useRef } from 'react';
import { CopyButton } from './CopyButton.js';

/**
 * A BibTeX entry shown whole: long lines (titles, links, hashes) wrap inside the box instead of
 * running out of it, and Copy puts the exact text, line breaks as written, on the clipboard.
 */
export function CitationBlock({ text, testId, dark = false }: { text: string; testId: string; dark?: boolean }) {
  const pre = useRef<HTMLPreElement>(null);
  const box = dark ? 'border-white/15 bg-black/30 text-white/90' : 'border-rule-soft bg-paper text-ink';
  return (
    <div className="relative">
      <pre ref={pre} className={`whitespace-pre-wrap rounded-md border px-4 py-3 pr-20 font-mono text-xs leading-relaxed [overflow-wrap:anywhere] ${box}`} data-testid={testId}>
        {text}
      </pre>
      <CopyButton text={text} target={pre} className="absolute right-2 top-2" />
    </div>
  );
}

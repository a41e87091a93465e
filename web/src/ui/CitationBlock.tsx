import { useRef, useState } from 'react';
import { Button } from './Button.js';

/**
 * A BibTeX entry shown whole: long lines (titles, links, hashes) wrap inside the box instead of
 * running out of it, and Copy puts the exact text, line breaks as written, on the clipboard.
 */
export function CitationBlock({ text, testId, dark = false }: { text: string; testId: string; dark?: boolean }) {
  const pre = useRef<HTMLPreElement>(null);
  const [state, setState] = useState<'idle' | 'copied' | 'selected'>('idle');
  async function copy() {
    try {
      await navigator.clipboard.writeText(text);
      setState('copied');
    } catch {
      // no clipboard access (an insecure origin, a refused permission): select it for Ctrl+C instead
      if (pre.current) window.getSelection()?.selectAllChildren(pre.current);
      setState('selected');
    }
  }
  const box = dark ? 'border-white/15 bg-black/30 text-white/90' : 'border-rule-soft bg-paper text-ink';
  return (
    <div className="relative">
      <pre ref={pre} className={`whitespace-pre-wrap rounded-md border px-4 py-3 pr-20 font-mono text-xs leading-relaxed [overflow-wrap:anywhere] ${box}`} data-testid={testId}>
        {text}
      </pre>
      <Button size="sm" tone="quiet" className="absolute right-2 top-2" onClick={() => void copy()}>
        {state === 'copied' ? 'Copied' : state === 'selected' ? 'Selected — press Ctrl+C' : 'Copy'}
      </Button>
    </div>
  );
}

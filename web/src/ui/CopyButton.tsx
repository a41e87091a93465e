import { useState, type RefObject } from 'react';
import { Button } from './Button.js';

/**
 * Copies `text` through the clipboard API where the page may use it; elsewhere (an insecure origin,
 * a refused permission) it selects `target`'s text for the person to copy with Ctrl+C.
 */
export function CopyButton({ text, target, className }: { text: string; target: RefObject<HTMLElement | null>; className?: string }) {
  const [state, setState] = useState<'idle' | 'copied' | 'selected'>('idle');
  async function copy() {
    try {
      await navigator.clipboard.writeText(text);
      setState('copied');
    } catch {
      if (target.current) window.getSelection()?.selectAllChildren(target.current);
      setState('selected');
    }
  }
  return (
    <Button size="sm" tone="quiet" className={className} onClick={() => void copy()}>
      {state === 'copied' ? 'Copied' : state === 'selected' ? 'Selected — press Ctrl+C' : 'Copy'}
    </Button>
  );
}

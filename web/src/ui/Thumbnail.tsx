import { useState } from 'react';
import type { Picture } from '../thumbnails.js';

/**
 * A small picture in a box of fixed size, loaded only when it scrolls near (so a list of fifty runs
 * asks for what is on screen) and never shifting the row. Without a picture, or when it cannot be
 * loaded, the box says why in words instead of showing a broken image.
 */
export function Thumbnail({ picture, alt, size = 96, ground = 'night' }: { picture: Picture; alt: string; size?: number; ground?: 'night' | 'sheet' }) {
  // remembers which address failed, so a row that gets a new address tries again
  const [failed, setFailed] = useState<string | null>(null);
  // min and max too: table cells and the base style's `max-width: 100%` would otherwise squeeze the box
  const box = { width: size, height: size, minWidth: size, maxWidth: size };
  if (!picture.src || failed === picture.src) {
    return (
      // plain words, no label of its own: the row already names what it stands for
      <div
        data-thumbnail="placeholder"
        style={box}
        className="flex shrink-0 items-center justify-center rounded border border-dashed border-rule bg-paper p-2 text-center text-[11px] leading-tight text-ink-faint"
      >
        {picture.note}
      </div>
    );
  }
  return (
    <img
      src={picture.src}
      alt={alt}
      width={size}
      height={size}
      loading="lazy"
      decoding="async"
      data-thumbnail="image"
      style={box}
      onError={() => setFailed(picture.src)}
      className={`block shrink-0 rounded object-contain ${ground === 'night' ? 'bg-night' : 'border border-rule bg-sheet'}`}
    />
  );
}

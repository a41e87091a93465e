import { useRef, type ReactNode } from 'react';
import { useMoreToTheRight } from './moreToTheRight.js';

/**
 * The frame a wide table scrolls sideways in on a narrow screen, so the page itself never does. While
 * columns are hidden past its right edge, that edge fades into the sheet with a soft shadow, the
 * usual sign of more to scroll to; it goes once the reader reaches the last column, and never shows
 * where the table fits. `className` dresses the frame (border, corners, ground).
 */
export function ScrollFrame({ className = '', children }: { className?: string; children: ReactNode }) {
  const scroller = useRef<HTMLDivElement>(null);
  const more = useMoreToTheRight(scroller);
  return (
    <div className={`relative overflow-hidden ${className}`} data-scroll-frame>
      <div ref={scroller} className="overflow-x-auto">
        {children}
      </div>
      <div
        aria-hidden="true"
        data-testid="more-to-the-right"
        className={`pointer-events-none absolute inset-y-0 right-0 w-10 bg-linear-to-l from-sheet to-sheet/0 shadow-[inset_-10px_0_8px_-8px_rgb(35_33_29/0.2)] transition-[opacity,visibility] duration-150 ${more ? 'visible opacity-100' : 'invisible opacity-0'}`}
      />
    </div>
  );
}

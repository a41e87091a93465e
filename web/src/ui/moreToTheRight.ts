import { useEffect, useState, type RefObject } from 'react';

/**
 * Whether a horizontal scroller hides content past its right edge. Chromium reports a fractional
 * scrollLeft at some zoom levels and a frame scrolled to its end may stop a pixel short, so less than
 * one pixel still hidden counts as none.
 */
export function hidesMoreToTheRight(scrollWidth: number, clientWidth: number, scrollLeft: number): boolean {
  return scrollWidth - clientWidth - scrollLeft >= 1;
}

/**
 * Follows a scroller: true while its content is wider than it and not scrolled to the end. Measured
 * on scroll and whenever the frame or its content changes size (a narrower window, rows arriving).
 */
export function useMoreToTheRight(ref: RefObject<HTMLElement | null>): boolean {
  const [more, setMore] = useState(false);
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    const measure = () => setMore(hidesMoreToTheRight(el.scrollWidth, el.clientWidth, el.scrollLeft));
    measure();
    const sizes = new ResizeObserver(measure);
    sizes.observe(el);
    for (const child of el.children) sizes.observe(child);
    el.addEventListener('scroll', measure, { passive: true });
    return () => {
      sizes.disconnect();
      el.removeEventListener('scroll', measure);
    };
  }, [ref]);
  return more;
}

import { useCallback, useEffect, useRef, useState } from 'react';
import { useSearchParams } from 'react-router';
import type { LatticeView } from './cells.js';
import { formatView, parseView, VIEW_PARAM } from './viewParams.js';

/** Quiet time after the last pan or zoom step before the address follows: one history write per gesture, not per frame. */
const WRITE_AFTER_MS = 300;

/**
 * The viewer's place kept in the address (`?at=`): the place a link opened at, and a callback that
 * writes each new place by replacing the current history entry, so Back leaves the viewer rather
 * than replaying every pan.
 */
export function useViewInAddress(): { opened: LatticeView | null; onViewChange: (v: LatticeView) => void } {
  const [params, setParams] = useSearchParams();
  // read once: later changes of the address come from the viewer itself
  const [opened] = useState(() => parseView(params.get(VIEW_PARAM)));
  const write = useRef(setParams);
  write.current = setParams;
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  useEffect(() => () => {
    if (timer.current) clearTimeout(timer.current);
  }, []);
  const onViewChange = useCallback((v: LatticeView) => {
    if (timer.current) clearTimeout(timer.current);
    timer.current = setTimeout(() => {
      timer.current = null;
      // the address as it is now (a layer may have been chosen since this view was reported)
      const next = new URLSearchParams(window.location.search);
      const value = formatView(v);
      if (next.get(VIEW_PARAM) === value) return;
      next.set(VIEW_PARAM, value);
      write.current(next, { replace: true, preventScrollReset: true });
    }, WRITE_AFTER_MS);
  }, []);
  return { opened, onViewChange };
}

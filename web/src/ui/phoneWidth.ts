import { useSyncExternalStore } from 'react';

/**
 * Narrower than Tailwind's `sm` (40rem = 640 px): a phone held upright. Below it the pages that fit
 * phones swap wide pieces for compact ones (the masthead's menu, the runs as stacked rows); at `sm`
 * and up nothing changes, so tablet and laptop layouts stay as they were.
 */
export const PHONE_QUERY = '(max-width: 39.99rem)';

const subscribe = (changed: () => void) => {
  const query = window.matchMedia(PHONE_QUERY);
  query.addEventListener('change', changed);
  return () => query.removeEventListener('change', changed);
};

/** True on a phone's width; follows the window as it turns or is resized. Server rendering counts as wide. */
export function usePhoneWidth(): boolean {
  return useSyncExternalStore(subscribe, () => window.matchMedia(PHONE_QUERY).matches, () => false);
}

import type { Standing } from '../../api/contract.js';
import { groupThousands } from '../../format.js';

/** Bytes shown exactly, grouped, with the unit named. */
export const formatBytes = (n: number) => `${groupThousands(n)} bytes`;

export const STANDING_LABEL: Record<Standing, string> = { over: 'over quota', close: 'close to quota', ok: 'within quota' };
const STANDING_CLASS: Record<Standing, string> = {
  over: 'border-stamp/40 bg-stamp-tint text-stamp',
  close: 'border-amber/40 bg-amber-tint text-ink',
  ok: 'border-rule bg-paper text-ink-soft',
};
export const standingClass = (s: Standing) => `inline-block rounded-full border px-2 py-0.5 text-xs font-medium ${STANDING_CLASS[s]}`;

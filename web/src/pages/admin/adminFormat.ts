import type { Standing } from '../../api/contract.js';
import { groupThousands, withUnit } from '../../format.js';
import { formatMoney } from '../credits/money.js';
import { niceStep } from '../../plots/plotData.js';

/** "1 worker", "5 connections", "no worker": a count with its noun in the right number. */
export function countOf(n: number, noun: string, plural = `${noun}s`): string {
  return n === 0 ? `no ${noun}` : withUnit(n, noun, plural);
}

/**
 * The farm's workers in plain words. `reporting` counts worker processes whose heartbeat key is alive
 * (shared/api/admin.ts); `connections` is BullMQ's count of Redis connections registered as workers,
 * summed over the queues: each process holds one for each queue it serves, so one process on five
 * queues shows 1 and 5. More connections than that means a process that stopped reporting in.
 */
export function workersSummary(reporting: number, connections: number, queues: number): string {
  const who = countOf(reporting, 'worker');
  const taking = `${countOf(connections, 'connection')} taking jobs from the ${countOf(queues, 'queue')}`;
  return `${who.charAt(0).toUpperCase()}${who.slice(1)} reporting in; ${taking} (one per queue a worker serves).`;
}

export const STANDING_LABEL: Record<Standing, string> = { over: 'over quota', close: 'close to quota', ok: 'within quota' };
const STANDING_CLASS: Record<Standing, string> = {
  over: 'border-stamp/40 bg-stamp-tint text-stamp',
  close: 'border-amber/40 bg-amber-tint text-ink',
  ok: 'border-rule bg-paper text-ink-soft',
};
export const standingClass = (s: Standing) => `inline-block rounded-full border px-2 py-0.5 text-xs font-medium ${STANDING_CLASS[s]}`;

/**
 * Axis ticks for whole credits: steps of 1, 2 or 5 × 10^k, never below 1, from 0 (or the lowest
 * value) to the first tick at or above the highest value. Recharts' own ticks for a 0–2 range are
 * 0, 0.5, 1, 1.5, 2, which whole-number labels turn into 0, 1, 1, 2, 2; with decimals off it
 * stretches the axis to 4 instead.
 */
export function creditTicks(values: readonly number[], maxTicks = 5): { ticks: number[]; domain: [number, number] } {
  const lo = Math.min(0, ...values.filter(Number.isFinite));
  const hi = Math.max(0, ...values.filter(Number.isFinite));
  const span = Math.max(hi - lo, 1);
  const step = Math.max(1, niceStep(span / (maxTicks - 1), [1, 2, 5]));
  const first = Math.floor(lo / step) * step;
  const last = Math.max(first + step, Math.ceil(hi / step) * step);
  const ticks: number[] = [];
  for (let t = first; t <= last; t += step) ticks.push(t);
  return { ticks, domain: [first, last] };
}

/**
 * An audit event's detail in a line (the CSV keeps the whole JSON): an amount with its currency as
 * money ("amount: €20.00", not the cents "amount: 2000, currency: eur"), counts grouped, lists joined.
 */
export function auditDetailText(d: Record<string, unknown> | null): string {
  if (!d) return '';
  const money = typeof d.amount === 'number' && typeof d.currency === 'string';
  return Object.entries(d)
    .filter(([k]) => !(money && k === 'currency'))
    .map(([k, v]) => `${k}: ${money && k === 'amount' ? formatMoney(v as number, d.currency as string) : detailValue(v)}`)
    .join(', ');
}

function detailValue(v: unknown): string {
  if (v === null || v === undefined) return 'none';
  if (typeof v === 'number') return Number.isSafeInteger(v) ? groupThousands(v) : String(v);
  if (Array.isArray(v) && v.every((x) => typeof x !== 'object' || x === null)) return v.join(', ');
  return typeof v === 'object' ? JSON.stringify(v) : String(v);
}

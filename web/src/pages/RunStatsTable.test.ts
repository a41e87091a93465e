import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, test } from 'vitest';
import { runStatsSchema } from '../../../shared/run-stats.js';
import { RunStatsTable } from './RunStatsTable.js';

/** A small finished run's statistics as the worker stores them (the numbers only need to parse). */
const stats = (seconds: number) =>
  runStatsSchema.parse({
    lattice: 'square', chips: '1000', shape: [21, 21], origin: [10, 10], grainsIn: '1000', grainsOut: '1000', toppledSites: 300,
    totalTopplings: '12000', originOdometer: '300', bbox: [[-9, 9], [-9, 9]], radiusEuclidean: 9.5, radiusLinf: 9, radiusOverSqrtN: 0.3,
    heightCounts: [10, 90, 100, 100], meanHeightToppled: 2, symmetric: true, seconds,
  });

/** The value cell of the row with this label, as text. */
function rowValue(html: string, label: string): string | undefined {
  const rows = [...html.matchAll(/<th[^>]*>(.*?)<\/th><td[^>]*>(.*?)<\/td>/g)];
  return rows.find((r) => r[1] === label)?.[2]?.replace(/<[^>]+>/g, '');
}

describe('the run page statistics', () => {
  test('a run of a fraction of a second shows its engine time, not "0 s"', () => {
    const html = renderToStaticMarkup(createElement(RunStatsTable, { stats: stats(0.283), wallSeconds: 6 }));
    expect(rowValue(html, 'Engine time')).toBe('283 ms');
    expect(rowValue(html, 'Wall-clock time')).toBe('6.0 s');
  });

  test('longer runs read in named units as before', () => {
    const html = renderToStaticMarkup(createElement(RunStatsTable, { stats: stats(3.46), wallSeconds: 200 }));
    expect(rowValue(html, 'Engine time')).toBe('3.5 s');
    expect(rowValue(html, 'Wall-clock time')).toBe('3 min 20 s');
  });
});

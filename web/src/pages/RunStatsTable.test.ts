import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, test } from 'vitest';
import { runStatsSchema } from '../../../shared/run-stats.js';
import { RunStatsTable } from './RunStatsTable.js';

/** A small finished run's statistics as the worker stores them (the numbers only need to parse). */
const stats = (seconds: number, shape = [21, 21]) =>
  runStatsSchema.parse({
    lattice: 'square', chips: '1000', shape, origin: shape.map(() => 10), grainsIn: '1000', grainsOut: '1000', toppledSites: 300,
    totalTopplings: '12000', originOdometer: '300', bbox: shape.map(() => [-9, 9]), radiusEuclidean: 9.5, radiusLinf: 9, radiusOverSqrtN: 0.3,
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

  test('the radius is divided by the pile\'s natural length n^(1/d): n on the line, √n on the plane, ∛n in space', () => {
    const row = (shape: number[], label: string) => rowValue(renderToStaticMarkup(createElement(RunStatsTable, { stats: stats(1, shape), wallSeconds: 1 })), label);
    expect(row([21], 'Radius ÷ n')).toBe((9.5 / 1000).toFixed(4));
    expect(row([21, 21], 'Radius ÷ √n')).toBe((9.5 / Math.sqrt(1000)).toFixed(4));
    expect(row([21, 21, 21], 'Radius ÷ ∛n')).toBe((9.5 / 10).toFixed(4));
  });

  test('the toppled region names x first and separates the axes, whatever the array order', () => {
    const region = (shape: number[], bbox: [number, number][]) =>
      rowValue(renderToStaticMarkup(createElement(RunStatsTable, { stats: { ...stats(1, shape), bbox }, wallSeconds: 1 })), 'Toppled region');
    // bounds arrive in array order: (y, x) on the plane, (z, y, x) in space
    expect(region([21, 21], [[-3, 4], [-9, 9]])).toBe('x ∈ [−9, 9], y ∈ [−3, 4]');
    expect(region([21, 21, 21], [[-1, 1], [-3, 4], [-9, 9]])).toBe('x ∈ [−9, 9], y ∈ [−3, 4], z ∈ [−1, 1]');
    expect(region([21], [[-9, 9]])).toBe('x ∈ [−9, 9]');
  });
});

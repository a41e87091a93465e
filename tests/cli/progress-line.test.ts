import { describe, expect, it } from 'vitest';
import { progressLine } from '../../renderer/src/cli/report.js';

describe('stabilize --progress lines', () => {
  it("say the plain engine's fraction is of the grains fed in", () => {
    expect(progressLine({ stage: 'relax', fraction: 0.25, toppledSites: 12_345 })).toBe('toppling: 25.0% of grains fed, 12,345 sites toppled');
  });

  it("give the fast path's level, its estimate of the work and the time left", () => {
    expect(progressLine({ stage: 'relax', fraction: 0.123, toppledSites: 25_318_041, level: 7, levels: 10, secondsLeft: 7500 })).toBe(
      'toppling, level 8 of 10: 12.3% of the estimated work, about 2 h 05 min left, 25,318,041 sites toppled',
    );
    // before there is anything to extrapolate from, and at the end, no time is promised
    expect(progressLine({ stage: 'level', fraction: 0.001, toppledSites: 0, level: 0, levels: 10, secondsLeft: null })).toBe('toppling, level 1 of 10: 0.1% of the estimated work, 0 sites toppled');
    expect(progressLine({ stage: 'done', fraction: 1, toppledSites: 431_009, level: 9, levels: 10, secondsLeft: 0 })).toBe('checking the result, level 10 of 10: 100.0% of the estimated work, 431,009 sites toppled');
    // stages the words do not know are shown as the engine names them
    expect(progressLine({ stage: 'repair', fraction: 0.5, toppledSites: 1 })).toBe('repair: 50.0% of grains fed, 1 sites toppled');
  });
});

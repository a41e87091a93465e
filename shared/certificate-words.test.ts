import { describe, expect, test } from 'vitest';
import { certificateSchema, type Certificate } from './run-stats.js';
import { certificateChecks, certificateHeadline, certificateLine, certificateSentence, certificateTone, methodWords } from './certificate-words.js';

/** A certificate as the engine stores it for a passing run; each test changes what it is about. */
const cert = (over: Partial<Certificate> = {}): Certificate =>
  certificateSchema.parse({ stable: true, nonNegative: true, massConserved: true, odometerMatches: true, minimal: true, peeledSites: 0, repairRounds: 0, method: 'seeded', passed: true, ...over });

describe('a run certificate in words', () => {
  test('a passing certificate reads as certified, every check holding, with how it was computed', () => {
    expect(certificateTone(cert())).toBe('passed');
    expect(certificateHeadline(cert())).toBe('Certified exact');
    expect(certificateLine(cert())).toBe('passed: stable, grains conserved, odometer explained, minimal (seeded, 0 repair rounds)');
    expect(certificateChecks(cert()).every((k) => k.ok === true)).toBe(true);
    expect(certificateSentence(cert({ method: 'legal' }))).toBe('Certified exact — stable, grains conserved, odometer explained, minimal (legal topplings)');
  });

  test('the three methods and the repair rounds are named in plain words', () => {
    expect(methodWords(cert({ method: 'legal' }))).toMatch(/^legal topplings/);
    expect(methodWords(cert({ repairRounds: 1 }))).toBe('seeded from coarser solutions, with 1 repair round');
    expect(methodWords(cert({ repairRounds: 3 }))).toBe('seeded from coarser solutions, with 3 repair rounds');
    expect(methodWords(cert({ method: 'closed-form' }))).toBe('grain by grain in closed form on the line');
    expect(certificateLine(cert({ method: 'closed-form' }))).toMatch(/\(closed form on the line\)$/);
  });

  test('on a graph that is not Eulerian minimality is untested, and the page says why', () => {
    // minimality by peeling needs as many in- as out-edges at every site (shared/run-stats.ts; arXiv:0901.3805)
    const c = cert({ minimal: null, method: 'legal' });
    const minimal = certificateChecks(c).at(-1)!;
    expect(minimal.ok).toBeNull();
    expect(minimal.detail).toMatch(/not Eulerian/);
    expect(minimal.detail).toMatch(/legal topplings only/);
    expect(certificateLine(c)).toBe('passed: stable, grains conserved, odometer explained, minimality not tested (legal topplings)');
  });

  test('statistics from before certificates, and certificates from before the odometer check, say so', () => {
    expect(certificateTone(undefined)).toBe('none');
    expect(certificateHeadline(null)).toBe('No certificate');
    expect(certificateLine(undefined)).toMatch(/before certificates existed/);
    expect(certificateSentence(undefined)).toMatch(/before certificates existed/);
    const old = cert({ odometerMatches: undefined });
    expect(certificateChecks(old)[2]).toMatchObject({ ok: null, name: 'odometer not checked' });
  });

  test('a failing certificate says so first and names what failed before what held', () => {
    const c = cert({ passed: false, minimal: false, peeledSites: 12, repairRounds: 2 });
    expect(certificateTone(c)).toBe('failed');
    expect(certificateHeadline(c)).toBe('Certificate failed');
    expect(certificateLine(c)).toBe('FAILED: not minimal, stable, grains conserved, odometer explained (seeded, 2 repair rounds)');
    expect(certificateChecks(c).at(-1)!.detail).toMatch(/^12 sites could topple once less/);
    const unstable = certificateChecks(cert({ passed: false, stable: false, nonNegative: false }))[0]!;
    expect(unstable).toMatchObject({ ok: false, name: 'not stable' });
    expect(unstable.detail).toMatch(/threshold.*negative/);
  });
});

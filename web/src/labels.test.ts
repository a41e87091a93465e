import { describe, expect, test } from 'vitest';
import { RUN_STATUSES } from '../../shared/api/runs.js';
import { backgroundOfSpec, runEndedText, runStatusHeading, runStatusWord } from './labels.js';
import { runPicture } from './thumbnails.js';

describe('backgroundOfSpec', () => {
  test('gives the parameters that define each kind of background', () => {
    expect(backgroundOfSpec({ kind: 'constant', height: 2 })).toBe('constant 2');
    expect(backgroundOfSpec({ kind: 'constant', height: 0 })).toBe('constant 0');
    expect(backgroundOfSpec({ kind: 'checkerboard', a: 3, b: 1 })).toBe('checkerboard 3 / 1');
    expect(backgroundOfSpec({ kind: 'annuli', a: 2, b: 0 })).toBe('annuli 2 / 0');
    expect(backgroundOfSpec({ kind: 'motif', cells: [[0, 1, 2], [2, 1, 0]] })).toBe('periodic motif 3×2 [0 1 2; 2 1 0]');
    expect(backgroundOfSpec({ kind: 'random', seed: 7, weights: [1, 2, 1] })).toBe('random i.i.d. heights 0–2, weights 1 : 2 : 1, seed 7');
    expect(backgroundOfSpec({ kind: 'random', seed: 0, weights: [0.25, 0.75] })).toBe('random i.i.d. heights 0–1, weights 0.25 : 0.75, seed 0');
    expect(backgroundOfSpec({ kind: 'array', sha256: 'ab12cd34'.repeat(8), shape: [101, 99] })).toBe('uploaded array 101×99, sha256 ab12cd34…');
  });

  test('stays one short line for large motifs and many weights', () => {
    const motif = Array.from({ length: 5 }, () => [0, 1, 2, 3, 0]);
    expect(backgroundOfSpec({ kind: 'motif', cells: motif })).toBe('periodic motif 5×5');
    const weights = Array.from({ length: 12 }, (_, i) => i + 1);
    expect(backgroundOfSpec({ kind: 'random', seed: 3, weights })).toBe('random i.i.d. heights 0–11, seed 3');
  });
});

describe('run status words', () => {
  test('one distinct word per state, the same at the head of a section', () => {
    expect(RUN_STATUSES.map(runStatusWord)).toEqual(['waiting', 'toppling', 'drawing', 'finished', 'failed', 'cancelled']);
    expect(new Set(RUN_STATUSES.map(runStatusWord)).size).toBe(RUN_STATUSES.length);
    // the run page's heading for a finished run and the list badge say the same word
    expect(runStatusHeading('finished')).toBe('Finished');
    expect(runStatusHeading('finished').toLowerCase()).toBe(runStatusWord('finished'));
  });

  test('a run page says how a run ended, not "finished" for one that was cancelled or failed', () => {
    const at = (iso: string) => iso.slice(11, 16);
    const ended = { startedAt: '2026-12-05T23:38:00Z', finishedAt: '2026-12-05T23:38:30Z' };
    expect(runEndedText({ status: 'finished', ...ended }, at)).toBe('finished 23:38');
    expect(runEndedText({ status: 'cancelled', ...ended }, at)).toBe('cancelled 23:38');
    expect(runEndedText({ status: 'failed', ...ended }, at)).toBe('failed 23:38');
    // cancelled while it waited: it never started
    expect(runEndedText({ status: 'cancelled', startedAt: null, finishedAt: '2026-12-05T23:40:00Z' }, at)).toBe('cancelled 23:40');
    expect(runEndedText({ status: 'computing', startedAt: '2026-12-05T23:41:00Z', finishedAt: null }, at)).toBe('started 23:41');
    expect(runEndedText({ status: 'queued', startedAt: null, finishedAt: null }, at)).toBe('');
  });

  test('the picture boxes of unfinished runs use the same words', () => {
    const note = (status: (typeof RUN_STATUSES)[number]) => runPicture({ id: 'r', status, artifactsExpiredAt: null }).note;
    for (const s of ['computing', 'rendering', 'cancelled'] as const) expect(note(s)).toBe(runStatusWord(s));
    expect(note('failed').startsWith(runStatusWord('failed'))).toBe(true);
    expect(note('queued').startsWith(runStatusWord('queued'))).toBe(true);
  });
});

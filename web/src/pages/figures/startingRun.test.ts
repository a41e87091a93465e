import { describe, expect, test } from 'vitest';
import type { Run, RunStatus } from '../../api/contract.js';
import { startingRun } from './startingRun.js';

const LAB = '00000000-0000-4000-8000-0000000000a1';
const OTHER_LAB = '00000000-0000-4000-8000-0000000000b2';
const id = (n: number) => `00000000-0000-4000-8000-${String(n).padStart(12, '0')}`;
// only what the decision reads is filled in; the statistics stand for "computed"
const run = (n: number, over: { status?: RunStatus; labId?: string; stats?: boolean } = {}): Run => ({
  id: id(n),
  labId: over.labId ?? LAB,
  title: `pile ${n}`,
  spec: { lattice: { preset: 'square' }, chips: 1000 } as Run['spec'],
  status: over.status ?? 'finished',
  stage: null,
  progress: 1,
  stats: over.stats === false ? null : ({ shape: [21, 21], origin: [10, 10] } as unknown as Run['stats']),
  error: null,
  author: { id: id(99), name: 'A. Uthor' },
  createdAt: '2026-12-05T10:00:00Z',
  startedAt: null,
  finishedAt: null,
  seriesId: null,
  artifactsExpiredAt: null,
});
const listed = [run(3), run(2), run(1)];
const settled = (r: Run | null) => ({ pending: false, run: r });

describe('the run a new figure starts from', () => {
  test('without ?run, the newest finished run; with one in the list, that run', () => {
    expect(startingRun(null, listed, LAB, settled(null))).toEqual({ kind: 'start', run: listed[0] });
    expect(startingRun(id(1), listed, LAB, settled(null))).toEqual({ kind: 'start', run: listed[2] });
  });

  test('a run that does not exist or may not be seen is said, not swapped for the newest', () => {
    const got = startingRun(id(404), listed, LAB, settled(null));
    expect(got.kind).toBe('refused');
    expect(got).toMatchObject({ title: 'That run cannot be found' });
    // anything typed after ?run= is the same: the API answered no such run
    expect(startingRun('not-a-run', listed, LAB, settled(null)).kind).toBe('refused');
  });

  test('waits for the answer about a run outside the list before deciding', () => {
    expect(startingRun(id(7), listed, LAB, { pending: true, run: null })).toEqual({ kind: 'looking' });
  });

  test('another lab\'s run is refused by name, even for a site admin who may read it', () => {
    const got = startingRun(id(8), listed, LAB, settled(run(8, { labId: OTHER_LAB })));
    expect(got).toMatchObject({ kind: 'refused', title: 'That run is not this lab’s to use' });
    expect(got.kind === 'refused' && got.text).toMatch(/^“pile 8” belongs to another lab/);
  });

  test('a run without a result says how it stands, in the run pages\' words', () => {
    const text = (status: RunStatus) => {
      const got = startingRun(id(9), listed, LAB, settled(run(9, { status, stats: false })));
      return got.kind === 'refused' ? `${got.title} / ${got.text}` : got.kind;
    };
    expect(text('computing')).toBe('That run has no result to print yet / “pile 9” is still toppling; figures are composed from finished runs. Pick one of them.');
    expect(text('failed')).toMatch(/^That run has no result to print \/ “pile 9” failed;/);
    expect(text('cancelled')).toMatch(/“pile 9” was cancelled;/);
  });

  test('a finished run of the lab older than the listed ones is used', () => {
    const old = run(1000);
    expect(startingRun(old.id, listed, LAB, settled(old))).toEqual({ kind: 'start', run: old });
  });

  test('a lab without finished runs says so', () => {
    expect(startingRun(null, [], LAB, settled(null))).toMatchObject({ kind: 'refused', title: 'No finished runs yet' });
  });
});

/**
 * A fast path whose certificate fails is never the answer: `stabilize` then computes the run again by
 * plain legal toppling. The fast paths here are the real ones, with one toppling too many counted at
 * one site of their result before it is certified (every height stable, mass conserved, but the
 * heights no longer what the odometer explains), the kind of error the certificate exists to catch. The plain engine's result is
 * the reference: legal toppling ends on the unique stable state (abelian property; Dhar 1990).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { stabilize, type Outcome } from '../../renderer/src/engine/index.js';
import { shutdownWorkers } from '../../renderer/src/engine/parallel.js';
import { stabilizeWith, type EnginePaths } from '../../renderer/src/engine/stabilize.js';
import { stabilizeLine } from '../../renderer/src/engine/line-path.js';
import { stabilizeTiled } from '../../renderer/src/engine/tiled.js';
import { certify, stabilizeScaled } from '../../renderer/src/scale/index.js';
import type { Problem } from '../../renderer/src/engine/problem.js';
import { comparable, problem } from './helpers.js';

afterAll(() => shutdownWorkers());

/** Counts one toppling more at the source's site and certifies the result again. */
function oneTopplingTooMany(p: Problem, o: Outcome): Outcome {
  const odometer = o.odometer.slice();
  let top = 0;
  for (let i = 1; i < odometer.length; i++) if (odometer[i]! > odometer[top]!) top = i;
  odometer[top]!++;
  const wrong: Outcome = { ...o, odometer, stats: { ...o.stats } };
  wrong.stats.certificate = certify(p, wrong, { method: o.stats.certificate!.method });
  return wrong;
}

/** The real paths, with the given fast path's answers spoiled; records which paths ran. */
function spoiled(which: 'line' | 'scaled') {
  const ran: string[] = [];
  const paths: EnginePaths = {
    line: async (p, o) => {
      ran.push('line');
      const out = await stabilizeLine(p, o);
      return which === 'line' && out ? oneTopplingTooMany(p, out) : out;
    },
    scaled: async (p, o) => {
      ran.push('scaled');
      const out = await stabilizeScaled(p, o);
      return which === 'scaled' ? oneTopplingTooMany(p, out) : out;
    },
    tiled: (p, o) => {
      ran.push('tiled');
      return stabilizeTiled(p, o);
    },
  };
  return { paths, ran };
}

describe('the certificate fallback', () => {
  it('on a line run: the spoiled closed-form answer is refused and the plain engine answers', async () => {
    const p = problem({ lattice: { preset: 'line' }, chips: 401 });
    const { paths, ran } = spoiled('line');
    const out = await stabilizeWith(paths, p, { threads: 1 });
    expect(ran).toEqual(['line', 'tiled']);
    // the spoiled answer really failed, and only on the check that ties heights to the odometer
    const honest = await stabilizeLine(p);
    const wrong = oneTopplingTooMany(p, honest!);
    expect(wrong.stats.certificate).toMatchObject({ stable: true, massConserved: true, odometerMatches: false, passed: false });
    expect(out.stats.certificate).toMatchObject({ method: 'legal', passed: true });
    const plain = await stabilize(p, { threads: 1, scaled: false });
    expect(comparable(out)).toEqual(comparable(plain));
  });

  it('on a square run past the seeded path threshold: the spoiled seeded answer is refused and the plain engine answers', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 70_000 });
    const { paths, ran } = spoiled('scaled');
    const out = await stabilizeWith(paths, p, { threads: 1 });
    expect(ran).toEqual(['scaled', 'tiled']);
    expect(out.stats.certificate).toMatchObject({ method: 'legal', passed: true });
    const plain = await stabilize(p, { threads: 1, scaled: false });
    expect(comparable(out)).toEqual(comparable(plain));
  });

  it('keeps a fast answer whose certificate passes (the same paths unspoiled run once)', async () => {
    const p = problem({ lattice: { preset: 'square' }, chips: 70_000 });
    const ran: string[] = [];
    const out = await stabilizeWith(
      {
        line: stabilizeLine,
        scaled: (q, o) => (ran.push('scaled'), stabilizeScaled(q, o)),
        tiled: (q, o) => (ran.push('tiled'), stabilizeTiled(q, o)),
      },
      p,
      { threads: 1 },
    );
    expect(ran).toEqual(['scaled']);
    expect(out.stats.certificate).toMatchObject({ method: 'seeded', passed: true });
  });
});

import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, test } from 'vitest';
import { DEMO_RUNS } from '../../api/src/seed/demo.js';

const README = readFileSync(path.resolve(import.meta.dirname, '..', '..', 'README.md'), 'utf8');
/** The README's account of the demo: from its heading to the sign-in table. */
const demoText = README.slice(README.indexOf('## The demo'), README.indexOf('| role |')).replace(/\s+/g, ' ');

/** The ways the README writes a grain count: 10^5, 5·10^4, or 1,001. */
function spellings(chips: number): string[] {
  const out = [chips.toLocaleString('en-US')];
  const k = Math.floor(Math.log10(chips));
  const lead = chips / 10 ** k;
  if (Number.isInteger(lead)) out.push(lead === 1 ? `10^${k}` : `${lead}·10^${k}`);
  return out;
}

describe('the README on the demo', () => {
  test('names the grain count of every seeded run, so a newcomer finds what the README promises', () => {
    const missing = DEMO_RUNS.filter((r) => !spellings(r.spec.chips).some((s) => demoText.includes(s))).map((r) => `${r.title} (${r.spec.chips})`);
    expect(missing).toEqual([]);
  });
});

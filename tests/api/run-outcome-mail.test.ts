import { describe, expect, it } from 'vitest';
import { runOutcomeMail } from '../../api/src/mail/run-outcome-mail.js';
import { latticeOfSpec } from '../../shared/lattice-names.js';

/** The long-run mail names the lattice as the pages do (shared/lattice-names.ts); pure, no services. */
describe('the run outcome mail', () => {
  const base = { id: '00000000-0000-4000-8000-000000000001', title: 'Late pile', status: 'finished' as const, chips: 1_000_000, error: null, seconds: 600, farmSeconds: 540 };
  it('says the lattice once, by its page name, not its preset key with "lattice" added', () => {
    const f = runOutcomeMail('https://tw.example', 'a@example.org', { ...base, lattice: latticeOfSpec({ periodic: { period: [2, 2], neighbours: [[[[1, 0]], [[0, 1]]], [[[0, 1]], [[1, 0]]]] }, name: 'f-lattice' }) });
    expect(f.text).toContain('Your run "Late pile" (F-lattice (2×2 cell), n = 1,000,000 grains) is ready');
    const sq = runOutcomeMail('https://tw.example', 'a@example.org', { ...base, lattice: latticeOfSpec({ preset: 'square' }) });
    expect(sq.text).toContain('(square lattice (Z²), n = 1,000,000 grains)');
    expect(sq.text).not.toMatch(/lattice \(Z²\) lattice/);
  });
});

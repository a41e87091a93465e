import { describe, expect, it } from 'vitest';
import { CREDIT_PACKS, packName } from '../../api/contract.js';
import { allowanceText } from './money.js';

describe('allowanceText', () => {
  it('speaks of this lab\'s allowance and names the standard one only where the lab is not on it', () => {
    expect(allowanceText({ month: '2026-12', freeAllowance: 100, allowanceIsDefault: true }, 100)).toBe('Free allowance for 2026-12: 100 credits a month for this lab, the standard allowance of every lab.');
    expect(allowanceText({ month: '2026-12', freeAllowance: 2, allowanceIsDefault: false }, 100)).toBe('Free allowance for 2026-12: 2 credits a month for this lab, set by a site admin (the standard allowance is 100 credits).');
    expect(allowanceText({ month: '2026-12', freeAllowance: 1, allowanceIsDefault: false }, 100)).toBe('Free allowance for 2026-12: 1 credit a month for this lab, set by a site admin (the standard allowance is 100 credits).');
    expect(allowanceText({ month: '2026-12', freeAllowance: 100, allowanceIsDefault: false }, 100)).toBe('Free allowance for 2026-12: 100 credits a month for this lab, set by a site admin to the standard amount.');
  });
});

describe('packName', () => {
  it('names a purchase\'s pack as its card does: capitalised, from the id the purchase row holds', () => {
    for (const p of CREDIT_PACKS) expect(packName(p.id)).toBe(p.name);
    expect(packName('ream')).toBe('Ream');
    // a pack no longer sold keeps its id as its name rather than showing nothing
    expect(packName('folio')).toBe('folio');
  });
});

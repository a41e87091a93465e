import { describe, expect, it } from 'vitest';
import { allowanceText } from './money.js';

describe('allowanceText', () => {
  it('speaks of this lab\'s allowance and names the standard one only where the lab is not on it', () => {
    expect(allowanceText({ month: '2026-12', freeAllowance: 100, allowanceIsDefault: true }, 100)).toBe('Free allowance for 2026-12: 100 credits a month for this lab, the standard allowance of every lab.');
    expect(allowanceText({ month: '2026-12', freeAllowance: 2, allowanceIsDefault: false }, 100)).toBe('Free allowance for 2026-12: 2 credits a month for this lab, set by a site admin (the standard allowance is 100 credits).');
    expect(allowanceText({ month: '2026-12', freeAllowance: 1, allowanceIsDefault: false }, 100)).toBe('Free allowance for 2026-12: 1 credit a month for this lab, set by a site admin (the standard allowance is 100 credits).');
    expect(allowanceText({ month: '2026-12', freeAllowance: 100, allowanceIsDefault: false }, 100)).toBe('Free allowance for 2026-12: 100 credits a month for this lab, set by a site admin to the standard amount.');
  });
});

import { describe, expect, test } from 'vitest';
import type { MeResponse } from '../api/contract.js';
import { mainNav } from './mainNav.js';

const person = (isAdmin: boolean) => ({ user: { isAdmin } }) as MeResponse;

describe('the masthead\'s sections', () => {
  test('a reader who is not signed in is offered the published figures only', () => {
    expect(mainNav(null).map((i) => i.label)).toEqual(['Figures']);
  });
  test('a signed-in person has runs, figures and the lab; a site admin the console too, last', () => {
    expect(mainNav(person(false)).map((i) => i.to)).toEqual(['/runs', '/figures', '/lab']);
    expect(mainNav(person(true)).map((i) => i.to)).toEqual(['/runs', '/figures', '/lab', '/admin']);
  });
});

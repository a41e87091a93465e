import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { friendlyMessage } from './errors.js';

const messageOf = (schema: z.ZodType, value: unknown) => {
  const r = schema.safeParse(value, { error: friendlyMessage });
  return r.success ? null : r.error.issues.map((i) => i.message);
};

describe('friendlyMessage: zod defaults in plain words', () => {
  it('says "whole number" only where the schema wants an integer', () => {
    expect(messageOf(z.number().int(), 2.5)).toEqual(['enter a whole number']);
    expect(messageOf(z.number().int().nullable(), Number('lots'))).toEqual(['enter a whole number']);
    // a margin in millimetres takes 7.5, so a word there asks for a number, not a whole one
    expect(messageOf(z.number().min(0), 'abc')).toEqual(['enter a number']);
  });

  it('names limits with grouped digits and choices by their values', () => {
    expect(messageOf(z.number().max(1200), 5000)).toEqual(['must be at most 1,200']);
    expect(messageOf(z.number().min(1), 0)).toEqual(['must be at least 1']);
    expect(messageOf(z.string().max(3), 'abcd')).toEqual(['must be at most 3 characters']);
    expect(messageOf(z.enum(['png', 'tiff']), 'gif')).toEqual(['must be one of "png", "tiff"']);
    expect(messageOf(z.literal('square'), 'round')).toEqual(['must be "square"']);
  });

  it('leaves a message written into the schema alone', () => {
    expect(messageOf(z.number().max(10, 'too many grains'), 11)).toEqual(['too many grains']);
    expect(messageOf(z.object({ a: z.string() }), {})).toEqual(['required']);
  });
});

import { describe, expect, test } from 'vitest';
import { readerFor } from './readerFor.js';

const labA = '0b6c1c52-8f1e-4a43-9c55-3c2b1de0a001';
const labB = '0b6c1c52-8f1e-4a43-9c55-3c2b1de0a002';
const published = { slug: 'square-n-1e6', labId: labA, publishedAt: '2026-03-01T10:00:00.000Z', withdrawnAt: null };
const person = (labs: string[], isAdmin = false) => ({ user: { isAdmin }, labs: labs.map((id) => ({ id })) });

describe('who reads a figure outside its lab', () => {
  test('a member of another lab is sent to the permanent link of a published figure', () => {
    expect(readerFor(published, person([labB]))).toBe('/f/square-n-1e6');
    expect(readerFor(published, person([]))).toBe('/f/square-n-1e6');
  });

  test('its own members and site admins keep the lab page', () => {
    expect(readerFor(published, person([labB, labA]))).toBeNull();
    expect(readerFor(published, person([], true))).toBeNull();
  });

  test('a figure that is not published, or was withdrawn, keeps its no-access state', () => {
    expect(readerFor({ ...published, publishedAt: null }, person([labB]))).toBeNull();
    expect(readerFor({ ...published, withdrawnAt: '2026-04-01T10:00:00.000Z' }, person([labB]))).toBeNull();
  });
});

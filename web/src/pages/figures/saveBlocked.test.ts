import { describe, expect, test } from 'vitest';
import { saveBlockedReason } from './saveBlocked.js';

describe('why a figure cannot be saved yet', () => {
  test('a missing title is named, before any other reason', () => {
    expect(saveBlockedReason({ settingsValid: false, title: '  ', layerUnavailable: true })).toBe('Give the figure a title first.');
  });

  test('an unavailable layer and invalid settings each say what to change', () => {
    expect(saveBlockedReason({ settingsValid: true, title: 'T', layerUnavailable: true })).toMatch(/choose another layer/);
    expect(saveBlockedReason({ settingsValid: false, title: 'T', layerUnavailable: false })).toMatch(/settings the proof lists/);
  });

  test('nothing is said when the figure can be saved', () => {
    expect(saveBlockedReason({ settingsValid: true, title: 'T', layerUnavailable: false })).toBeNull();
  });
});

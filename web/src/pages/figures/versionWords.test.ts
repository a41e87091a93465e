import { describe, expect, test } from 'vitest';
import { runEndedText } from '../../labels.js';
import { versionEndedText } from './versionWords.js';

describe('when a print version ended', () => {
  const at = (iso: string) => iso.slice(11, 16);
  test('a failed print says failed at its time, as a failed run does; a ready one done', () => {
    expect(versionEndedText({ status: 'failed', finishedAt: '2026-12-05T23:38:00Z' }, at)).toBe('failed 23:38');
    expect(versionEndedText({ status: 'failed', finishedAt: '2026-12-05T23:38:00Z' }, at)).toBe(runEndedText({ status: 'failed', startedAt: null, finishedAt: '2026-12-05T23:38:00Z' }, at));
    expect(versionEndedText({ status: 'ready', finishedAt: '2026-12-05T23:40:00Z' }, at)).toBe('done 23:40');
  });

  test('says nothing before it ends', () => {
    expect(versionEndedText({ status: 'printing', finishedAt: null }, at)).toBe('');
    expect(versionEndedText({ status: 'queued', finishedAt: null }, at)).toBe('');
  });
});

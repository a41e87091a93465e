import { describe, expect, it } from 'vitest';
import { figurePicture, NO_PICTURE, runPicture } from './thumbnails.js';

const id = '0b6c1c52-8f1e-4a43-9c55-3c2b1de0a001';

describe('runPicture', () => {
  it('asks for the picture of a finished run, saying what is missing if it is not stored', () => {
    expect(runPicture({ id, status: 'finished', artifactsExpiredAt: null })).toEqual({ src: `/api/runs/${id}/thumbnail`, note: NO_PICTURE });
  });

  it('asks for nothing before a run is drawn, or once it failed or was cancelled, and says the state in words', () => {
    const notes = (['queued', 'computing', 'rendering', 'failed', 'cancelled'] as const).map((status) => runPicture({ id, status, artifactsExpiredAt: null }));
    expect(notes.every((p) => p.src === null)).toBe(true);
    expect(notes.map((p) => p.note)).toEqual(['waiting for the farm', 'toppling', 'drawing', 'failed: nothing to show', 'cancelled']);
  });

  it('asks for nothing once the retention rule removed the run\'s artifacts', () => {
    expect(runPicture({ id, status: 'finished', artifactsExpiredAt: '2025-01-02T00:00:00.000Z' })).toEqual({ src: null, note: 'artifacts removed' });
  });
});

describe('figurePicture', () => {
  it('asks for the figure\'s picture by its slug', () => {
    expect(figurePicture({ slug: 'sixteen-grains' })).toEqual({ src: '/api/figures/sixteen-grains/thumbnail', note: NO_PICTURE });
  });
});

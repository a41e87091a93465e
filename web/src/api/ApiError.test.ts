import { describe, expect, it } from 'vitest';
import { ApiError, messageForPeople } from './ApiError.js';

describe('messageForPeople', () => {
  it('leaves off the field the API names first, and nothing else', () => {
    const tooBig = new ApiError(400, 'spec: this run needs about 9,486.5 GiB of working memory; use fewer grains', [{ path: 'spec', message: 'needs about 9,486.5 GiB' }]);
    expect(messageForPeople(tooBig)).toBe('this run needs about 9,486.5 GiB of working memory; use fewer grains');
    const chips = new ApiError(400, 'spec.chips: must be at least 1', [{ path: 'spec.chips', message: 'must be at least 1' }]);
    expect(messageForPeople(chips)).toBe('must be at least 1');
    // no issues, or a message that does not start with the path: shown as it is
    expect(messageForPeople(new ApiError(500, 'spec: upstream failed'))).toBe('spec: upstream failed');
    expect(messageForPeople(new ApiError(400, 'title: required', [{ path: 'spec', message: 'x' }]))).toBe('title: required');
    expect(messageForPeople(new Error('offline'))).toBe('offline');
  });
});

import { describe, expect, test } from 'vitest';
import bibtexParse from '@orcid/bibtex-parse-js';
import { figureBibtex, runBibtex, runLink } from './citation.js';
import type { Figure, LabFigure } from '../api/contract.js';

const figure: Figure = {
  id: '8a6e0d8e-3f43-4a8f-9d53-0c1f1c7b2a10',
  slug: 'honeycomb-fifty-thousand',
  title: 'Fifty thousand grains on the honeycomb {lattice} & 100% of its sites',
  caption: 'demo caption',
  runId: '1f2e3d4c-5b6a-4789-8abc-def012345678',
  lattice: 'honeycomb',
  background: 'constant',
  backgroundSpec: { kind: 'constant', height: 0 },
  chips: 50_000,
  publishedAt: '2026-11-30T12:00:00.000Z',
  authors: ['Maren Tollis', 'Perrin Ashcombe'],
  labName: 'Tessellate Hill Sandpile Group',
};

describe('BibTeX entry of a figure', () => {
  test('parses with an independent BibTeX parser into the figure’s fields', () => {
    // @orcid/bibtex-parse-js: a general-purpose BibTeX parser from npm
    const [entry, ...rest] = bibtexParse.toJSON(figureBibtex(figure, 'https://example.org/f/honeycomb-fifty-thousand'));
    expect(rest).toHaveLength(0);
    expect(entry!.entryType.toLowerCase()).toBe('misc');
    expect(entry!.citationKey).toBe('honeycomb-fifty-thousand');
    expect(entry!.entryTags.year).toBe('2026');
    // BibTeX separates authors with " and " (the format's own rule, common practice)
    expect(entry!.entryTags.author).toBe('Maren Tollis and Perrin Ashcombe');
    expect(entry!.entryTags.howpublished).toBe('\\url{https://example.org/f/honeycomb-fifty-thousand}');
  });

  test('braces, ampersands and percent signs in a title are escaped, so the entry stays balanced', () => {
    const [entry] = bibtexParse.toJSON(figureBibtex(figure, 'https://example.org/f/x'));
    expect(entry!.entryTags.title).toBe('Fifty thousand grains on the honeycomb \\{lattice\\} \\& 100\\% of its sites');
  });

  test('a title with an exponent, a tilde or a backslash becomes LaTeX text commands, so the citing paper still compiles', () => {
    const [entry] = bibtexParse.toJSON(figureBibtex({ ...figure, title: 'Square lattice, n = 3·10^5 ~ a\\b' }, 'https://example.org/f/x'));
    expect(entry!.entryTags.title).toBe('Square lattice, n = 3·10\\textasciicircum{}5 \\textasciitilde{} a\\textbackslash{}b');
    // outside math mode a bare ^ or ~ is a LaTeX error or a non-breaking space: none may be left unescaped
    expect(entry!.entryTags.title.replace(/\\text\w+\{\}/g, '')).not.toMatch(/[\^~\\]/);
  });

  test('one version is keyed and labelled as that version, so two versions cited together never share a key', () => {
    const [v2] = bibtexParse.toJSON(figureBibtex(figure, 'https://example.org/f/honeycomb-fifty-thousand/v/2', undefined, 2));
    expect(v2!.citationKey).toBe('honeycomb-fifty-thousand-v2');
    expect(v2!.entryTags.version).toBe('2');
    expect(v2!.entryTags.howpublished).toBe('\\url{https://example.org/f/honeycomb-fifty-thousand/v/2}');
    const [v1] = bibtexParse.toJSON(figureBibtex(figure, 'https://example.org/f/honeycomb-fifty-thousand/v/1', undefined, 1));
    expect(v1!.citationKey).not.toBe(v2!.citationKey);
  });

  test('an unpublished figure has no year rather than a wrong one', () => {
    const [entry] = bibtexParse.toJSON(figureBibtex({ ...figure, publishedAt: null }, 'https://example.org/f/x'));
    expect(entry!.entryTags.year).toBeUndefined();
  });
});

describe('BibTeX entry of a run', () => {
  test('carries engine version and heights hash, and parses with an independent BibTeX parser', () => {
    // @orcid/bibtex-parse-js: a general-purpose BibTeX parser from npm
    const [entry] = bibtexParse.toJSON(
      runBibtex({
        runId: '1f2e3d4c-5b6a-4789-8abc-def012345678',
        title: 'Square lattice, n = 10^5',
        authors: ['Maren Tollis'],
        finishedAt: '2026-12-01T23:00:00.000Z',
        engineVersion: '0.3.1',
        heightsSha256: 'ab'.repeat(32),
        permalink: 'https://example.org/f/square-lattice',
        public: true,
      }),
    );
    expect(entry!.citationKey).toBe('toppleworks-run-1f2e3d4c');
    expect(entry!.entryTags.year).toBe('2026');
    expect(entry!.entryTags.howpublished).toBe('\\url{https://example.org/f/square-lattice}');
    expect(entry!.entryTags.note).toContain('engine 0.3.1');
    expect(entry!.entryTags.note).toContain(`sha256 ${'ab'.repeat(32)}`);
    expect(entry!.entryTags.note).not.toContain('members');
  });

  test('an entry whose link only the lab can open says so in the entry itself', () => {
    const [entry] = bibtexParse.toJSON(
      runBibtex({ runId: figure.runId, title: 't', authors: ['A'], finishedAt: null, engineVersion: '1', heightsSha256: 'cd'.repeat(32), permalink: 'https://example.org/runs/x/view', public: false }),
    );
    expect(entry!.entryTags.note).toContain('the link opens only for members of the lab that computed it');
  });
});

describe('the link a run is cited by', () => {
  const runId = figure.runId;
  const labFigure = (slug: string, patch: Partial<LabFigure> = {}): LabFigure => ({
    ...figure,
    slug,
    labId: '0d9a4c1e-2b3f-4e5a-8c7d-6f5e4d3c2b1a',
    withdrawnAt: null,
    latestVersion: 1,
    newestStatus: 'ready',
    publishedVersion: patch.publishedAt === null ? null : 1,
    ...patch,
  });

  test('is the permanent link of the first published figure that leads with the run', () => {
    const figures = [
      labFigure('later', { publishedAt: '2026-12-02T00:00:00.000Z' }),
      labFigure('draft', { publishedAt: null }),
      labFigure('withdrawn', { publishedAt: '2026-11-01T00:00:00.000Z', withdrawnAt: '2026-11-02T00:00:00.000Z' }),
      labFigure('another-run', { runId: '2f2e3d4c-5b6a-4789-8abc-def012345678', publishedAt: '2026-10-01T00:00:00.000Z' }),
      labFigure('first', { publishedAt: '2026-11-30T00:00:00.000Z' }),
    ];
    expect(runLink(runId, figures, 'https://example.org')).toEqual({ url: 'https://example.org/f/first', public: true, figure: { slug: 'first', title: figure.title } });
  });

  test('without a published figure is the lab’s viewer, marked as not public', () => {
    const figures = [labFigure('draft', { publishedAt: null }), labFigure('withdrawn', { withdrawnAt: '2026-12-03T00:00:00.000Z' })];
    expect(runLink(runId, figures, 'https://example.org')).toEqual({ url: `https://example.org/runs/${runId}/view`, public: false, figure: null });
  });
});

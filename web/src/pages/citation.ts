import type { Figure, LabFigure } from '../api/contract.js';

/** What each LaTeX special character becomes in a BibTeX field. */
const BIB_ESCAPES: Record<string, string> = {
  '\\': '\\textbackslash{}',
  '^': '\\textasciicircum{}',
  '~': '\\textasciitilde{}',
  '{': '\\{',
  '}': '\\}',
  '%': '\\%',
  '&': '\\&',
  '#': '\\#',
  _: '\\_',
  $: '\\$',
};

/**
 * Braces and backslashes would break a BibTeX field, and LaTeX's special characters the document
 * citing it (a title "n = 10^6"). One pass, so the braces of an inserted command stay unescaped.
 */
function bibEscape(s: string): string {
  return s.replace(/[\\^~{}%&#_$]/g, (c) => BIB_ESCAPES[c]!);
}

/**
 * A BibTeX @misc entry for a published figure, keyed by its slug, or for one published version of
 * it (keyed `<slug>-v<n>`, with a `version` field biblatex prints and plain BibTeX ignores), so two
 * versions cited in one paper never share a key.
 */
export function figureBibtex(f: Figure, permalink: string, artifact?: { engineVersion: string; heightsSha256: string }, version?: number): string {
  const year = f.publishedAt ? new Date(f.publishedAt).getUTCFullYear() : undefined;
  const lines = [
    `@misc{${f.slug}${version ? `-v${version}` : ''},`,
    `  title        = {${bibEscape(f.title)}},`,
    `  author       = {${f.authors.map(bibEscape).join(' and ')}},`,
    year ? `  year         = {${year}},` : null,
    version ? `  version      = {${version}},` : null,
    `  howpublished = {\\url{${permalink}}},`,
    artifact
      ? `  note         = {${bibEscape(f.labName)}; figure published with Toppleworks, engine ${bibEscape(artifact.engineVersion)}, heights sha256 ${artifact.heightsSha256}},`
      : `  note         = {${bibEscape(f.labName)}; figure published with Toppleworks},`,
    '}',
  ];
  return lines.filter((l) => l !== null).join('\n');
}

export interface RunCitation {
  runId: string;
  title: string;
  authors: string[];
  /** ISO time the run finished */
  finishedAt: string | null;
  engineVersion: string;
  /** sha256 of the heights array data (run.json) */
  heightsSha256: string;
  permalink: string;
  /** false: the link opens only for members of the run's lab, and the entry says so */
  public: boolean;
}

export interface RunLink {
  url: string;
  /** whether a reader without an account can open it */
  public: boolean;
  /** the published figure the link belongs to, when it is public */
  figure: { slug: string; title: string } | null;
}

/**
 * Where a citation of a run should point. Runs are private to their lab by design; what a lab makes
 * public is a figure, whose permanent link (/f/<slug>) deep-zooms into its first panel's run and
 * offers that run's arrays and hashes to anyone. So a run that leads a published figure is cited by
 * the figure's link (the first one published, so the citation does not move when more follow);
 * otherwise only the lab's own viewer link exists, and it is marked as such.
 */
export function runLink(runId: string, labFigures: readonly LabFigure[], origin: string): RunLink {
  const shown = labFigures
    .filter((f) => f.runId === runId && f.publishedAt !== null && f.withdrawnAt === null)
    .sort((a, b) => a.publishedAt!.localeCompare(b.publishedAt!) || a.slug.localeCompare(b.slug));
  const first = shown[0];
  if (first) return { url: `${origin}/f/${first.slug}`, public: true, figure: { slug: first.slug, title: first.title } };
  return { url: `${origin}/runs/${runId}/view`, public: false, figure: null };
}

/**
 * A BibTeX @misc entry for a computed run: the engine version and the content hash of the heights
 * let a reader check that an array they download is the one cited.
 */
export function runBibtex(c: RunCitation): string {
  const year = c.finishedAt ? new Date(c.finishedAt).getUTCFullYear() : undefined;
  const lines = [
    `@misc{toppleworks-run-${c.runId.slice(0, 8)},`,
    `  title        = {${bibEscape(c.title)}},`,
    `  author       = {${c.authors.map(bibEscape).join(' and ')}},`,
    year ? `  year         = {${year}},` : null,
    `  howpublished = {\\url{${c.permalink}}},`,
    `  note         = {Computed with Toppleworks engine ${bibEscape(c.engineVersion)}; heights sha256 ${c.heightsSha256}${c.public ? '' : '; the link opens only for members of the lab that computed it'}},`,
    '}',
  ];
  return lines.filter((l) => l !== null).join('\n');
}

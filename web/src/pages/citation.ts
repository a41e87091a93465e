import type { Figure } from '../api/contract.js';

/** Braces and backslashes would break a BibTeX field; escape the few characters that matter. */
function bibEscape(s: string): string {
  return s.replace(/\\/g, '\\textbackslash{}').replace(/([{}%&#_$])/g, '\\$1');
}

/** A BibTeX @misc entry for a published figure, keyed by its slug. */
export function figureBibtex(f: Figure, permalink: string, artifact?: { engineVersion: string; heightsSha256: string }): string {
  const year = f.publishedAt ? new Date(f.publishedAt).getUTCFullYear() : undefined;
  const lines = [
    `@misc{${f.slug},`,
    `  title        = {${bibEscape(f.title)}},`,
    `  author       = {${f.authors.map(bibEscape).join(' and ')}},`,
    year ? `  year         = {${year}},` : null,
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
    `  note         = {Computed with Toppleworks engine ${bibEscape(c.engineVersion)}; heights sha256 ${c.heightsSha256}},`,
    '}',
  ];
  return lines.filter((l) => l !== null).join('\n');
}

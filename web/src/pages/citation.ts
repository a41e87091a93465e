import type { Figure } from '../api/contract.js';

/** Braces and backslashes would break a BibTeX field; escape the few characters that matter. */
function bibEscape(s: string): string {
  return s.replace(/\\/g, '\\textbackslash{}').replace(/([{}%&#_$])/g, '\\$1');
}

/** A BibTeX @misc entry for a published figure, keyed by its slug. */
export function figureBibtex(f: Figure, permalink: string): string {
  const year = f.publishedAt ? new Date(f.publishedAt).getUTCFullYear() : undefined;
  const lines = [
    `@misc{${f.slug},`,
    `  title        = {${bibEscape(f.title)}},`,
    `  author       = {${f.authors.map(bibEscape).join(' and ')}},`,
    year ? `  year         = {${year}},` : null,
    `  howpublished = {\\url{${permalink}}},`,
    `  note         = {${bibEscape(f.labName)}; figure published with Toppleworks},`,
    '}',
  ];
  return lines.filter((l) => l !== null).join('\n');
}

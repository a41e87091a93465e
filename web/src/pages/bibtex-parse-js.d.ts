// Types for @orcid/bibtex-parse-js (the package ships none); used only by the citation test.
declare module '@orcid/bibtex-parse-js' {
  export interface BibtexEntry {
    citationKey: string;
    entryType: string;
    entryTags: Record<string, string>;
  }
  export function toJSON(bibtex: string): BibtexEntry[];
  const _default: { toJSON: typeof toJSON };
  export default _default;
}

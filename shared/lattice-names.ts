import type { LatticeChoice } from './run-spec.js';

/**
 * The one place lattices get their names for people: pages, the composer's suggested title and the
 * mails all say these. One rule: the name as said mid-sentence, lowercase (proper names keep their
 * capital: Manhattan, the F of the F-lattice), "lattice" said where the trade says it, and the
 * integer lattices' Zᵈ after them in brackets.
 */
const LATTICE_NAMES: Readonly<Record<string, string>> = {
  line: 'line (Z¹)',
  square: 'square lattice (Z²)',
  cubic: 'cubic lattice (Z³)',
  triangular: 'triangular lattice',
  honeycomb: 'honeycomb lattice',
  'f-lattice': 'F-lattice',
  manhattan: 'Manhattan lattice',
  periodic: 'periodic graph',
};

/** A preset's (or a periodic preset's) name; any other key, such as an uploaded graph's own name, as it is. */
export function latticeName(key: string): string {
  return LATTICE_NAMES[key] ?? key;
}

/** A run's lattice: the preset's name, or a periodic graph's name with its cell ("F-lattice (2×2 cell)"). */
export function latticeOfSpec(l: LatticeChoice): string {
  if ('preset' in l) return latticeName(l.preset);
  const [px, py] = l.periodic.period;
  return `${latticeName(l.name ?? 'periodic')} (${px}×${py} cell)`;
}

/** The same name at the start of a title or a line: "Square lattice (Z²)". */
export function capitalized(name: string): string {
  return name.charAt(0).toUpperCase() + name.slice(1);
}

import type { RunSpec } from '../../api/contract.js';
import { chipsLabel } from '../../format.js';
import { capitalized, latticeOfSpec } from '../../labels.js';

/**
 * The title field's placeholder: the chosen run's lattice and grain count, named as the rest of the
 * app names them ("Square lattice (Z²), n = 10⁶"), so the example fits the figure being made.
 */
export function titleHint(spec: Pick<RunSpec, 'lattice' | 'chips'>): string {
  return `${capitalized(latticeOfSpec(spec.lattice))}, ${chipsLabel(spec.chips)}`;
}

import { scaleSymbol } from '../../../shared/natural-scale.js';
import { withUnit } from '../format.js';

/**
 * The words of the cell readout: coordinates as a tuple on the plane and in space, a bare number on
 * the line (a 1-tuple "(2)" reads like a footnote), and the values with their units in the right
 * number ("1 grain"). Pure, so the wording is tested without a browser.
 */

const fmt = (v: number) => (v < 0 ? `−${Math.abs(v)}` : String(v));
const fmt4 = (v: number) => (v < 0 ? `−${Math.abs(v).toFixed(4)}` : v.toFixed(4));
const tuple = (parts: string[]) => (parts.length === 1 ? parts[0]! : `(${parts.join(', ')})`);

export interface ReadoutText {
  coordinatesLabel: string;
  coordinates: string;
  rescaledLabel: string;
  /** "—" when the run has no grains to rescale by */
  rescaled: string;
}

export function readoutCoordinates(lattice: readonly number[], rescaled: readonly number[]): ReadoutText {
  const names = ['x', 'y', 'z'].slice(0, lattice.length);
  return {
    coordinatesLabel: tuple(names),
    coordinates: tuple(lattice.map(fmt)),
    rescaledLabel: tuple(names.map((n) => `${n}/${scaleSymbol(lattice.length)}`)),
    rescaled: rescaled.length ? tuple(rescaled.map(fmt4)) : '—',
  };
}

/** "1 grain", "3 grains". */
export const heightText = (height: number | bigint): string => withUnit(height, 'grain');

/** "1 toppling", "94,007 topplings"; a float64 odometer is rounded to whole topplings. */
export const odometerText = (odometer: number | bigint): string => withUnit(typeof odometer === 'bigint' ? odometer : Math.round(odometer), 'toppling');

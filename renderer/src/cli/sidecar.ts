import type { RunSpec } from '../../../shared/run-spec.js';
import type { RunStatsJson } from '../../../shared/run-stats.js';

/** The JSON written next to OUT.npy as OUT.json: enough to reproduce, cite and verify the array. */
export interface Sidecar {
  format: 'toppleworks.export/1';
  engineVersion: string;
  spec: RunSpec;
  heights: ArrayRecord | null;
  odometer: ArrayRecord | null;
  /** for PNG backgrounds: grey level behind each height 0, 1, 2, … */
  backgroundPngLevels?: number[];
  stats: RunStatsJson;
  createdAt: string;
}

export interface ArrayRecord {
  file: string;
  dtype: string;
  shape: number[];
  /** array index of the origin, in array axis order */
  origin: number[];
  /** sha256 of the array data bytes (everything after the .npy header) */
  sha256: string;
}

/** Path of the sidecar for an array file: OUT.npy → OUT.json. */
export function sidecarPath(npyPath: string): string {
  return npyPath.replace(/\.npy$/i, '.json');
}

/** JSON.stringify that writes bigints as decimal strings (the JSON form of engine statistics). */
export function toJson(value: unknown, indent?: number): string {
  return JSON.stringify(value, (_key, v: unknown) => (typeof v === 'bigint' ? v.toString() : v), indent);
}

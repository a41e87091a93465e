/**
 * A file's size in words, the same on pages and in mail: decimal units as file managers show them,
 * three significant digits ("97 bytes", "69.6 kB", "812 kB", "1.4 MB", "2.35 GB"). Exact byte
 * counts are not needed to check a download: the SHA-256 beside the size does that.
 */
const UNITS = ['kB', 'MB', 'GB', 'TB'] as const;

export function fileSizeText(bytes: number): string {
  if (bytes < 1000) return bytes === 1 ? '1 byte' : `${bytes} bytes`;
  const shown = (v: number) => Number(v.toPrecision(3));
  let v = bytes / 1000;
  let u = 0;
  // compared after rounding, so 999,950 bytes reads "1 MB" rather than "1000 kB"
  while (shown(v) >= 1000 && u < UNITS.length - 1) {
    v /= 1000;
    u++;
  }
  return `${shown(v).toLocaleString('en-US')} ${UNITS[u]}`;
}

/**
 * The tile requests a IIIF Image API 3.0 level-0 client makes for an info.json, computed from the
 * spec (https://iiif.io/api/image/3.0/ §4.1 region, §4.2 size, §5.6 tiles) rather than from our
 * renderer's planner: tiles of tiles[].width × scaleFactor full-resolution pixels from the top left,
 * region `x,y,w,h` (or `full` for the whole image), size `w,h` (or `max` for the whole image at full
 * size), the canonical forms OpenSeadragon's IIIF 3 tile source requests.
 */
export type IiifInfo = { width: number; height: number; tiles: { width: number; scaleFactors: number[] }[] };

export function iiifTilePaths(info: IiifInfo): string[] {
  const { width: W, height: H } = info;
  const out: string[] = [];
  for (const t of info.tiles) {
    for (const sf of t.scaleFactors) {
      const step = t.width * sf;
      for (let y = 0; y < H; y += step) {
        for (let x = 0; x < W; x += step) {
          const rw = Math.min(step, W - x);
          const rh = Math.min(step, H - y);
          const region = x === 0 && y === 0 && rw === W && rh === H ? 'full' : `${x},${y},${rw},${rh}`;
          const sw = Math.ceil(rw / sf);
          const sh = Math.ceil(rh / sf);
          const size = region === 'full' && sw === W && sh === H ? 'max' : `${sw},${sh}`;
          out.push(`${region}/${size}/0/default.png`);
        }
      }
    }
  }
  return out;
}

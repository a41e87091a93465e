import { useEffect, useMemo, useRef, useState } from 'react';
import { arrayUrl, type ArtifactBase } from './runArtifacts.js';
import { createCellReader, httpByteFetcher, type CellReader } from './npyRange.js';
import type { CellAt } from './cells.js';

export interface CellValues {
  cell: CellAt;
  height: number | bigint | null;
  odometer: number | bigint | null;
}

/**
 * Height and odometer of the cell under the cursor, read by HTTP Range requests into the stored
 * arrays (small cached blocks, never the whole file). Answers that arrive after the cursor moved on
 * are dropped, so the readout never shows a stale cell.
 */
export function useCellReadout(base: ArtifactBase, cell: CellAt | null): { values: CellValues | null; error: string | null } {
  const key = base.kind === 'run' ? `run:${base.id}` : `figure:${base.slug}`;
  const readers = useMemo<{ heights: CellReader; odometer: CellReader }>(
    () => ({
      heights: createCellReader(httpByteFetcher(arrayUrl(base, 'heights.npy'))),
      odometer: createCellReader(httpByteFetcher(arrayUrl(base, 'odometer.npy'))),
    }),
    // eslint-disable-next-line react-hooks/exhaustive-deps -- the readers belong to the artifacts, named by key
    [key],
  );
  const [values, setValues] = useState<CellValues | null>(null);
  const [error, setError] = useState<string | null>(null);
  const latest = useRef<number | null>(null);

  useEffect(() => {
    latest.current = cell?.index ?? null;
    if (!cell) {
      setValues(null);
      return;
    }
    const wanted = cell.index;
    Promise.all([readers.heights.cell(wanted), readers.odometer.cell(wanted)]).then(
      ([height, odometer]) => {
        if (latest.current !== wanted) return;
        setError(null);
        setValues({ cell, height, odometer });
      },
      (e: unknown) => {
        if (latest.current === wanted) setError(e instanceof Error ? e.message : String(e));
      },
    );
  }, [cell?.index, readers]); // eslint-disable-line react-hooks/exhaustive-deps -- the cell is named by its index

  return { values, error };
}

import { Link } from 'react-router';
import { useSetActiveLab } from '../api/queries.js';
import type { MeResponse } from '../api/contract.js';

/**
 * The active lab decides whose runs, quotas and credits the person sees. In the masthead it is a small
 * select that hides below `md`; in the phone's menu (`wide`) it spans the menu with a label above.
 */
export function LabSwitcher({ me, wide = false }: { me: MeResponse; wide?: boolean }) {
  const setLab = useSetActiveLab();
  if (me.labs.length === 0) {
    return (
      <Link to="/lab" className={wide ? 'text-sm text-ink-soft' : 'text-xs text-ink-soft'}>
        no lab yet
      </Link>
    );
  }
  return (
    <label className={wide ? 'flex flex-col gap-1.5 text-xs font-semibold uppercase tracking-[0.14em] text-ink-faint' : 'hidden min-w-0 items-center gap-2 text-xs text-ink-soft md:flex'}>
      <span>Lab</span>
      <select
        aria-label="active lab"
        className={
          wide
            ? 'w-full rounded-md border border-rule bg-sheet px-3 py-2.5 text-base font-normal normal-case tracking-normal text-ink'
            : 'max-w-44 rounded-md border border-rule bg-sheet px-2 py-1 text-sm text-ink lg:max-w-72'
        }
        value={me.activeLabId ?? ''}
        disabled={setLab.isPending}
        onChange={(e) => setLab.mutate(e.target.value)}
      >
        {me.activeLabId ? null : <option value="">choose a lab</option>}
        {me.labs.map((l) => (
          <option key={l.id} value={l.id}>
            {l.name}
          </option>
        ))}
      </select>
    </label>
  );
}

import { Link } from 'react-router';
import { useCreditCheck } from '../../api/queries.js';

/**
 * The run form's answer before submitting: would this many credits be accepted now? Same words as
 * the API's 402, with the way to the credits page when something is missing.
 */
export function CreditGate({ labId, credits }: { labId: string; credits: number }) {
  const check = useCreditCheck(labId, credits);
  if (!check.data) return null;
  const c = check.data;
  return (
    <p
      className={`mt-2 rounded px-2 py-1 text-xs ${c.allowed ? 'bg-leaf-tint text-ink-soft' : 'bg-stamp-tint text-stamp'}`}
      data-testid="credit-check"
      role={c.allowed ? undefined : 'alert'}
    >
      {c.allowed ? c.message : `Not accepted now: ${c.message}.`}{' '}
      {c.missingCredits > 0 ? <Link to={c.buyPath}>Buy credits</Link> : null}
    </p>
  );
}

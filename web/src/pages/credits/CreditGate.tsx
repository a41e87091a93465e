import { Link } from 'react-router';
import { useCreditCheck } from '../../api/queries.js';
import { creditCheckRequestSchema } from '../../api/contract.js';

/**
 * The run form's answer before submitting: would this many credits be accepted now? Same words as
 * the API's 402, with the way to the credits page when something is missing.
 */
export function CreditGate({ labId, credits }: { labId: string; credits: number }) {
  // the API's own bounds: a cost outside them is explained here rather than sent to be refused
  const request = creditCheckRequestSchema.safeParse({ credits });
  const check = useCreditCheck(labId, request.success ? credits : null);
  const tone = 'mt-2 rounded px-2 py-1 text-xs';
  if (!request.success) {
    return (
      <p className={`${tone} bg-stamp-tint text-stamp`} data-testid="credit-check" role="alert">
        Not accepted: the cost {request.error.issues[0]?.message ?? 'is out of range'}.
      </p>
    );
  }
  if (check.isError) {
    return (
      <p className={`${tone} bg-stamp-tint text-stamp`} data-testid="credit-check" role="alert">
        The credits could not be checked: {check.error.message}
      </p>
    );
  }
  if (!check.data) return null;
  const c = check.data;
  return (
    <p
      className={`${tone} ${c.allowed ? 'bg-leaf-tint text-ink-soft' : 'bg-stamp-tint text-stamp'}`}
      data-testid="credit-check"
      role={c.allowed ? undefined : 'alert'}
    >
      {c.allowed ? c.message : `Not accepted now: ${c.message}.`}{' '}
      {c.missingCredits > 0 ? <Link to={c.buyPath}>Buy credits</Link> : null}
    </p>
  );
}

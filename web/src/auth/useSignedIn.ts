import { useMe } from '../api/queries.js';
import type { MeResponse } from '../api/contract.js';

/** Inside RequireSignIn the person is known; this narrows the type for the page. */
export function useSignedIn(): MeResponse {
  const me = useMe();
  if (!me.data) throw new Error('useSignedIn used outside RequireSignIn');
  return me.data;
}

export function useActiveLab(): { id: string; name: string; role: 'author' | 'manager' } | null {
  const me = useSignedIn();
  return me.labs.find((l) => l.id === me.activeLabId) ?? null;
}

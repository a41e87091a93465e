import type { MeResponse } from '../api/contract.js';

/** The masthead's destinations for who is reading: the same list in the wide row and in the phone's menu. */
export function mainNav(signedIn: MeResponse | null): { to: string; label: string }[] {
  return [
    ...(signedIn ? [{ to: '/runs', label: 'Runs' }] : []),
    { to: '/figures', label: 'Figures' },
    ...(signedIn ? [{ to: '/lab', label: 'Lab' }] : []),
    ...(signedIn?.user.isAdmin ? [{ to: '/admin', label: 'Site admin' }] : []),
  ];
}

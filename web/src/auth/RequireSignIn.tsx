import { Navigate, Outlet, useLocation } from 'react-router';
import { useMe } from '../api/queries.js';
import { ErrorPanel, SkeletonBlock } from '../ui/index.js';
import { signInPathFor } from './nextPath.js';

/** Pages behind sign-in: a reader is sent to the sign-in page and brought back afterwards. */
export function RequireSignIn() {
  const me = useMe();
  const location = useLocation();
  if (me.isPending) return <SkeletonBlock lines={6} />;
  if (me.isError) return <ErrorPanel error={me.error} />;
  if (!me.data) return <Navigate to={signInPathFor(location)} replace />;
  return <Outlet />;
}

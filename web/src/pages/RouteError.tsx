import { Link, isRouteErrorResponse, useRouteError } from 'react-router';
import { ErrorPanel } from '../ui/index.js';

/** A page that threw while rendering: keep the frame, say what broke, offer a way back. */
export function RouteError() {
  const error = useRouteError();
  const shown = isRouteErrorResponse(error) ? new Error(`${error.status} ${error.statusText}`) : error;
  return (
    <ErrorPanel title="This page could not be shown" error={shown instanceof Error ? shown : new Error(String(shown))}>
      <Link to="/" reloadDocument className="text-sm">
        Back to the front page
      </Link>
    </ErrorPanel>
  );
}

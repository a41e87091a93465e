import { Link } from 'react-router';
import { EmptyState } from '../ui/index.js';

export function NotFound() {
  return (
    <EmptyState title="No page at this address" action={<Link to="/">Back to the front page</Link>}>
      The link may be mistyped, or the page has moved.
    </EmptyState>
  );
}

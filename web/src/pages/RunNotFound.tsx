import { Link } from 'react-router';
import { isAddressMissing } from '../api/ApiError.js';
import { EmptyState, PageFrame } from '../ui/index.js';

/** The API hides runs of other labs behind a 404 (and a malformed id behind a 400): both read as "not here". */
export const isRunMissing = isAddressMissing;

/** What /runs/:id and its deep zoom say when the API has no such run for this person. */
export function RunNotFound() {
  return (
    <EmptyState title="No run at this address" action={<Link to="/runs">Back to runs</Link>}>
      It may belong to another lab, or the link is mistyped.
    </EmptyState>
  );
}

/** The same on a route outside the paper frame (the full-bleed deep zoom): on paper, with the masthead. */
export function RunNotFoundPage() {
  return (
    <PageFrame>
      <title>No run at this address · Toppleworks</title>
      <RunNotFound />
    </PageFrame>
  );
}

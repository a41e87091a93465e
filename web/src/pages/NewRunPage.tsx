import { Link, useNavigate, useSearchParams } from 'react-router';
import { useRun } from '../api/queries.js';
import { useActiveLab } from '../auth/useSignedIn.js';
import { RunForm } from '../runForm/RunForm.js';
import { emptyForm, formOfSpec } from '../runForm/formState.js';
import { EmptyState, ErrorPanel, PageHeading, Section, SkeletonBlock } from '../ui/index.js';

/**
 * /runs/new — the run form on a page of its own; `?from=<run id>` prefills it from that run
 * ("duplicate with edits"), leaving the original untouched.
 */
export function NewRunPage() {
  const [params] = useSearchParams();
  const navigate = useNavigate();
  const from = params.get('from') ?? '';
  const source = useRun(from);
  const lab = useActiveLab();
  if (!lab) {
    return (
      <EmptyState title="You are not in a lab yet" action={<Link to="/lab">Go to the lab page</Link>}>
        Runs belong to a lab and draw on its compute budget.
      </EmptyState>
    );
  }
  if (from && source.isPending) return <SkeletonBlock lines={8} />;
  if (from && source.isError) return <ErrorPanel error={source.error} />;
  const original = from ? source.data?.run : undefined;
  return (
    <div>
      <PageHeading
        overline={
          original ? (
            <Link to={`/runs/${original.id}`} className="text-ink-faint no-underline hover:text-press">
              ← {original.title}
            </Link>
          ) : (
            lab.name
          )
        }
        title={original ? 'Duplicate with edits' : 'New run'}
        lede={original ? 'The form holds the specification of the run you came from; change what you like and start a new run.' : undefined}
      />
      <Section>
        <RunForm key={from} labId={lab.id} initial={original ? formOfSpec(original.spec, `${original.title} (copy)`) : emptyForm()} onClose={() => navigate(-1)} />
      </Section>
    </div>
  );
}

import { Link } from 'react-router';
import { useOutbox } from '../api/queries.js';

/** On a developer's machine mails land in the local fake; point there so the link can be followed. */
export function OutboxHint() {
  const outbox = useOutbox();
  if (!outbox.isSuccess) return null;
  return (
    <p className="text-sm text-ink-soft">
      Working locally? Captured mails are in the <Link to="/dev/outbox">development outbox</Link>.
    </p>
  );
}

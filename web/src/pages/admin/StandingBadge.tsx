import type { Standing } from '../../api/contract.js';
import { STANDING_LABEL, standingClass } from './adminFormat.js';

export function StandingBadge({ standing }: { standing: Standing }) {
  return <span className={standingClass(standing)}>{STANDING_LABEL[standing]}</span>;
}

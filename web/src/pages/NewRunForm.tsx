import { RunForm } from '../runForm/RunForm.js';
import { emptyForm, parseGrains } from '../runForm/formState.js';
import { Section } from '../ui/index.js';

export { parseGrains };

/** The run form inside the runs list, opened by "New run". */
export function NewRunForm({ labId, onClose }: { labId: string; onClose: () => void }) {
  return (
    <Section
      className="mb-8"
      title="New run"
      description="n grains at the origin (and any further sources), toppled to the final stable configuration. The lab's credits pay for the compute."
    >
      <RunForm labId={labId} initial={emptyForm()} onClose={onClose} />
    </Section>
  );
}

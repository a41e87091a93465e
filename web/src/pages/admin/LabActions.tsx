import { useState, type FormEvent } from 'react';
import { allowanceRequestSchema, creditAdjustmentRequestSchema, suspensionRequestSchema, type LabUsage } from '../../api/contract.js';
import { groupThousands } from '../../format.js';
import { Button, FormError, Notice, SelectField, TextField, serverFieldErrors, validate, type FieldErrors } from '../../ui/index.js';
import { useAdjustCredits, useSetAllowance, useSuspension } from './adminQueries.js';

/** Grant or revoke credits; the reason is required and goes into the ledger and the trail. */
export function CreditsForm({ lab }: { lab: LabUsage }) {
  const adjust = useAdjustCredits(lab.labId);
  const [kind, setKind] = useState<'grant' | 'revocation'>('grant');
  const [credits, setCredits] = useState('');
  const [reason, setReason] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const [done, setDone] = useState<string | null>(null);
  async function submit(e: FormEvent) {
    e.preventDefault();
    setDone(null);
    const v = validate(creditAdjustmentRequestSchema, { kind, credits: credits.trim() === '' ? NaN : Number(credits), reason });
    if (!v.ok) return setErrors(v.errors);
    setErrors({});
    try {
      await adjust.mutateAsync(v.data);
      setDone(`${kind === 'grant' ? 'Granted' : 'Revoked'} ${groupThousands(v.data.credits)} credits: “${v.data.reason}”`);
      setCredits('');
      setReason('');
    } catch (err) {
      setErrors(serverFieldErrors(err));
    }
  }
  return (
    <form onSubmit={submit} className="space-y-3" aria-label="grant or revoke credits" noValidate>
      <div className="grid grid-cols-[10rem_8rem_minmax(0,1fr)] gap-3">
        <SelectField label="Action" value={kind} onChange={(e) => setKind(e.target.value as 'grant' | 'revocation')}>
          <option value="grant">Grant</option>
          <option value="revocation">Revoke</option>
        </SelectField>
        <TextField label="Credits" inputMode="numeric" value={credits} onChange={(e) => setCredits(e.target.value)} error={errors.credits} />
        <TextField label="Reason" value={reason} onChange={(e) => setReason(e.target.value)} error={errors.reason} hint="recorded in the ledger and the audit trail" />
      </div>
      <Button type="submit" busy={adjust.isPending} busyLabel="Booking…">{kind === 'grant' ? 'Grant credits' : 'Revoke credits'}</Button>
      {adjust.isError && !Object.keys(errors).length ? <FormError error={adjust.error} /> : null}
      {done ? <Notice tone="success" title={done} /> : null}
    </form>
  );
}

export function AllowanceForm({ lab }: { lab: LabUsage }) {
  const set = useSetAllowance(lab.labId);
  const [amount, setAmount] = useState(String(lab.freeAllowance));
  const [reason, setReason] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  async function submit(e: FormEvent) {
    e.preventDefault();
    const v = validate(allowanceRequestSchema, { freeAllowance: amount.trim() === '' ? NaN : Number(amount), reason });
    if (!v.ok) return setErrors(v.errors);
    setErrors({});
    try {
      await set.mutateAsync(v.data);
      setReason('');
    } catch (err) {
      setErrors(serverFieldErrors(err));
    }
  }
  return (
    <form onSubmit={submit} className="space-y-3" aria-label="free allowance" noValidate>
      <div className="grid grid-cols-[10rem_minmax(0,1fr)] gap-3">
        <TextField label="Credits per month" inputMode="numeric" value={amount} onChange={(e) => setAmount(e.target.value)} error={errors.freeAllowance} />
        <TextField label="Reason for the change" value={reason} onChange={(e) => setReason(e.target.value)} error={errors.reason} hint="applies from this month; this month's free credits are topped up or cut back at once" />
      </div>
      <Button type="submit" tone="quiet" busy={set.isPending}>Set allowance</Button>
      {set.isError && !Object.keys(errors).length ? <FormError error={set.error} /> : null}
    </form>
  );
}

export function SuspensionForm({ lab }: { lab: LabUsage }) {
  const suspended = lab.suspendedAt !== null;
  const act = useSuspension(lab.labId, !suspended);
  const [reason, setReason] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  async function submit(e: FormEvent) {
    e.preventDefault();
    const v = validate(suspensionRequestSchema, { reason });
    if (!v.ok) return setErrors(v.errors);
    setErrors({});
    try {
      await act.mutateAsync(v.data);
      setReason('');
    } catch (err) {
      setErrors(serverFieldErrors(err));
    }
  }
  return (
    <form onSubmit={submit} className="space-y-3" aria-label={suspended ? 'reinstate the lab' : 'suspend the lab'} noValidate>
      <p className="text-sm text-ink-soft">
        {suspended
          ? 'Reinstating puts the lab’s queued runs back on the farm and lets its members submit again.'
          : 'Suspending takes the lab’s queued runs off the farm and refuses new submissions. Nothing is deleted; running jobs finish.'}
      </p>
      <TextField label={suspended ? 'Reason for reinstating' : 'Reason for suspending'} value={reason} onChange={(e) => setReason(e.target.value)} error={errors.reason} />
      <Button type="submit" tone={suspended ? 'quiet' : 'danger'} busy={act.isPending}>{suspended ? 'Reinstate lab' : 'Suspend lab'}</Button>
      {act.isError && !Object.keys(errors).length ? <FormError error={act.error} /> : null}
    </form>
  );
}

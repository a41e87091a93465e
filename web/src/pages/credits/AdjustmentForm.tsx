import { useState, type FormEvent } from 'react';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../../api/client.js';
import { keys } from '../../api/queries.js';
import { creditAdjustmentRequestSchema, type CreditAdjustmentRequest } from '../../api/contract.js';
import { Button, FormError, Section, SelectField, TextField, serverFieldErrors, validate, type FieldErrors } from '../../ui/index.js';

/** Site admins: grant or take back credits, always with a reason (kept in the ledger and the audit trail). */
export function AdjustmentForm({ labId }: { labId: string }) {
  const qc = useQueryClient();
  const [kind, setKind] = useState<CreditAdjustmentRequest['kind']>('grant');
  const [credits, setCredits] = useState('');
  const [reason, setReason] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const adjust = useMutation({
    mutationFn: (body: CreditAdjustmentRequest) => api('POST', `/api/labs/${encodeURIComponent(labId)}/credits/adjustments`, body),
    onSuccess: async () => {
      setCredits('');
      setReason('');
      await qc.invalidateQueries({ queryKey: keys.credits(labId) });
    },
    onError: (e) => setErrors(serverFieldErrors(e)),
  });
  function submit(e: FormEvent) {
    e.preventDefault();
    const v = validate(creditAdjustmentRequestSchema, { kind, credits: Number(credits.replaceAll(',', '')), reason });
    if (!v.ok) return setErrors(v.errors);
    setErrors({});
    adjust.mutate(v.data);
  }
  return (
    <Section title="Grant or revoke credits" description="Site admins only. Revocations take only what is available; credits held by running jobs stay.">
      <form className="grid grid-cols-[10rem_10rem_1fr_auto] items-end gap-4" onSubmit={submit} noValidate>
        <SelectField label="Kind" value={kind} onChange={(e) => setKind(e.target.value as CreditAdjustmentRequest['kind'])}>
          <option value="grant">grant</option>
          <option value="revocation">revocation</option>
        </SelectField>
        <TextField label="Credits" inputMode="numeric" value={credits} onChange={(e) => setCredits(e.target.value)} error={errors.credits} />
        <TextField label="Reason" value={reason} onChange={(e) => setReason(e.target.value)} error={errors.reason} />
        <Button type="submit" busy={adjust.isPending}>Book it</Button>
      </form>
      {adjust.isError && !Object.keys(errors).length ? (
        <div className="mt-4">
          <FormError error={adjust.error} />
        </div>
      ) : null}
    </Section>
  );
}

import { useState, type FormEvent } from 'react';
import { useNavigate } from 'react-router';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '../api/client.js';
import { createRunRequestSchema, LATTICE_PRESETS, type RunResponse } from '../api/contract.js';
import { latticeName } from '../labels.js';
import { Button, Count, FormError, Section, SelectField, TextField, validate, serverFieldErrors, type FieldErrors } from '../ui/index.js';

type BackgroundKind = 'constant' | 'checkerboard' | 'random';

/** Numbers may be typed with grouping ("1,000,000") or as a power of ten ("10^6", "1e6"). */
export function parseGrains(raw: string): number {
  const s = raw.trim().replace(/[,_\s]/g, '');
  const pow = /^(\d+(?:\.\d+)?)?(?:\*|x|×)?10\^(\d+)$/.exec(s);
  if (pow) return Number(pow[1] ?? 1) * 10 ** Number(pow[2]);
  return s === '' ? NaN : Number(s);
}

function intOrNaN(v: FormDataEntryValue | null): number {
  const s = String(v ?? '').trim();
  return s === '' ? NaN : Number(s);
}

/** A first, simple way to start a run: one point source on a preset lattice over a simple background. */
export function NewRunForm({ labId, onClose }: { labId: string; onClose: () => void }) {
  const navigate = useNavigate();
  const qc = useQueryClient();
  const [errors, setErrors] = useState<FieldErrors>({});
  const [kind, setKind] = useState<BackgroundKind>('constant');
  const [grainsText, setGrainsText] = useState('1000000');
  const create = useMutation({
    mutationFn: (body: unknown) => api<RunResponse>('POST', '/api/runs', body),
    onSuccess: (r) => {
      void qc.invalidateQueries({ queryKey: ['runs'] });
      navigate(`/runs/${r.run.id}`);
    },
    onError: (e) => setErrors(serverFieldErrors(e)),
  });

  function submit(e: FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    const background =
      kind === 'constant'
        ? { kind, height: intOrNaN(f.get('height')) }
        : kind === 'checkerboard'
          ? { kind, a: intOrNaN(f.get('a')), b: intOrNaN(f.get('b')) }
          : { kind, seed: intOrNaN(f.get('seed')), weights: String(f.get('weights') ?? '').split(/[\s,;]+/).filter(Boolean).map(Number) };
    const body = {
      labId,
      title: f.get('title'),
      spec: { lattice: { preset: f.get('lattice') }, chips: parseGrains(grainsText), sources: [], background },
    };
    const r = validate(createRunRequestSchema, body);
    if (!r.ok) return setErrors(r.errors);
    setErrors({});
    create.mutate(r.data);
  }

  const grains = parseGrains(grainsText);
  return (
    <Section
      className="mb-8"
      title="New run"
      description="n grains at the origin, toppled to the final stable configuration. The lab's credits pay for the compute."
    >
      <form noValidate onSubmit={submit} className="grid grid-cols-3 gap-5">
        <TextField label="Title" name="title" error={errors.title} fieldClassName="col-span-3" placeholder="e.g. Square lattice, one million grains" />
        <SelectField label="Lattice" name="lattice" defaultValue="square" error={errors['spec.lattice.preset'] ?? errors['spec.lattice']}>
          {LATTICE_PRESETS.map((l) => (
            <option key={l} value={l}>
              {latticeName(l)}
            </option>
          ))}
        </SelectField>
        <TextField
          label="Grains at the origin (n)"
          name="chips"
          inputMode="numeric"
          value={grainsText}
          onChange={(e) => setGrainsText(e.target.value)}
          error={errors['spec.chips']}
          hint={Number.isSafeInteger(grains) && grains >= 0 ? <Count n={grains} unit="grains" /> : 'a whole number, e.g. 1000000 or 10^6'}
        />
        <SelectField label="Background" value={kind} onChange={(e) => setKind(e.target.value as BackgroundKind)}>
          <option value="constant">constant height</option>
          <option value="checkerboard">checkerboard</option>
          <option value="random">random i.i.d.</option>
        </SelectField>
        {kind === 'constant' ? (
          <TextField label="Height everywhere" name="height" inputMode="numeric" defaultValue="0" error={errors['spec.background.height']} />
        ) : kind === 'checkerboard' ? (
          <>
            <TextField label="Height where x + y is even" name="a" inputMode="numeric" defaultValue="2" error={errors['spec.background.a']} />
            <TextField label="Height where x + y is odd" name="b" inputMode="numeric" defaultValue="1" error={errors['spec.background.b']} />
          </>
        ) : (
          <>
            <TextField label="Seed" name="seed" inputMode="numeric" defaultValue="1" error={errors['spec.background.seed']} />
            <TextField
              label="Weights of heights 0, 1, 2, …"
              name="weights"
              defaultValue="1 1 1"
              error={errors['spec.background.weights']}
              hint="relative chances, separated by spaces"
              mono
            />
          </>
        )}
        <div className="col-span-3 flex items-center justify-end gap-3">
          {create.isError && !Object.keys(errors).length ? <FormError error={create.error} /> : null}
          {errors.labId || errors.body ? <FormError error={new Error(errors.labId ?? errors.body)} /> : null}
          <Button tone="quiet" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" busy={create.isPending} busyLabel="Starting…">
            Start run
          </Button>
        </div>
      </form>
    </Section>
  );
}

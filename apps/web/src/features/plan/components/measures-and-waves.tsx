import {
  createMeasureSchema,
  createWaveSchema,
  measureKinds,
  waveKinds,
  type CreateMeasure,
  type CreateWave,
  type Measure,
  type Wave,
} from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, Select, TextInput } from '@/components/ui/field';
import { FigureTable } from '@/components/ui/figure-table';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { formatDay } from '@/lib/format';
import { plainMessages } from '@/lib/form-messages';
import { useApiSubmit } from '@/lib/use-api-submit';

const kindLabels: Record<Measure['kind'], string> = { achievement: 'Achievement', behaviour: 'Behaviour' };

/** How a measure's answers and its good direction read: "0 to 200" and "Higher", or "Yes or no" and "Yes". */
export function measureLabels(m: Pick<Measure, 'scale' | 'minScore' | 'maxScore' | 'higherIsBetter'>): { answers: string; better: string } {
  if (m.scale === 'yes-no') return { answers: 'Yes or no', better: `“${m.higherIsBetter ? 'Yes' : 'No'}” is the good answer` };
  return { answers: `${m.minScore} to ${m.maxScore}`, better: m.higherIsBetter ? 'Higher scores' : 'Lower scores' };
}
const waveKindLabels: Record<Wave['kind'], string> = { baseline: 'Baseline', outcome: 'Outcome', 'follow-up': 'Follow-up' };

export function MeasuresList({ measures }: { measures: Measure[] }) {
  if (measures.length === 0) return <p className="text-ink-muted">No measures yet.</p>;
  return (
    <FigureTable
      caption="Measures"
      hideCaption
      columns={[
        { key: 'name', header: 'Measure' },
        { key: 'range', header: 'Answers' },
        { key: 'direction', header: 'Better' },
        { key: 'kind', header: 'Kind' },
      ]}
      rows={measures.map((m) => ({
        id: m.id,
        name: m.name,
        range: measureLabels(m).answers,
        direction: measureLabels(m).better,
        kind: kindLabels[m.kind],
      }))}
    />
  );
}

export function WavesList({ waves }: { waves: Wave[] }) {
  if (waves.length === 0) return <p className="text-ink-muted">No waves yet.</p>;
  return (
    <FigureTable
      caption="Waves"
      hideCaption
      columns={[
        { key: 'name', header: 'Wave' },
        { key: 'kind', header: 'Kind' },
        { key: 'opens', header: 'Opens' },
        { key: 'closes', header: 'Closes' },
      ]}
      rows={waves.map((w) => ({ id: w.id, name: w.name, kind: waveKindLabels[w.kind], opens: formatDay(w.opensOn), closes: formatDay(w.closesOn) }))}
    />
  );
}

export function AddMeasureForm({ onAdd }: { onAdd: (input: CreateMeasure) => Promise<unknown> }) {
  const [added, setAdded] = useState<string | null>(null);
  const form = useForm({
    resolver: zodResolver(createMeasureSchema, plainMessages),
    defaultValues: { name: '', scale: 'score' as const, higherIsBetter: true, kind: 'achievement' as const },
    // A yes/no measure has no range fields: hidden fields leave the values sent.
    shouldUnregister: true,
  });
  const {
    register,
    reset,
    watch,
    formState: { errors, isSubmitting },
  } = form;
  const yesNo = watch('scale') === 'yes-no';

  const { onSubmit, problem } = useApiSubmit(form, ['name', 'scale', 'minScore', 'maxScore', 'higherIsBetter', 'kind'], async (input) => {
    setAdded(null);
    await onAdd(input);
    reset();
    setAdded(`${input.name} is added.`);
  });

  return (
    <form noValidate onSubmit={onSubmit} aria-label="Add a measure" className="space-y-4 rounded-lg border border-line bg-surface p-5">
      <h4 className="font-semibold">Add a measure</h4>
      {problem && <FormProblemAlert problem={problem} />}
      <Field label="Measure name" hint="E.g. Oral reading fluency (words correct per minute)." error={errors.name?.message}>
        {(control) => <TextInput {...control} autoComplete="off" {...register('name')} />}
      </Field>
      <div className="grid gap-4 sm:grid-cols-2">
        <Field label="Each student gets" hint="A yes/no measure: met the cut, chronically absent, on track…" error={errors.scale?.message}>
          {(control) => (
            <Select {...control} {...register('scale')}>
              <option value="score">A score</option>
              <option value="yes-no">Yes or no</option>
            </Select>
          )}
        </Field>
        {!yesNo && (
          <>
            <Field label="Lowest possible score" error={errors.minScore?.message}>
              {(control) => <TextInput {...control} type="number" step="any" {...register('minScore', { valueAsNumber: true })} />}
            </Field>
            <Field label="Highest possible score" error={errors.maxScore?.message}>
              {(control) => <TextInput {...control} type="number" step="any" {...register('maxScore', { valueAsNumber: true })} />}
            </Field>
          </>
        )}
        <Field label={yesNo ? 'The good answer is' : 'Better scores are'} error={errors.higherIsBetter?.message}>
          {(control) => (
            <Select {...control} {...register('higherIsBetter', { setValueAs: (v: string | boolean) => v === true || v === 'true' })}>
              <option value="true">{yesNo ? 'Yes' : 'Higher'}</option>
              <option value="false">{yesNo ? 'No' : 'Lower'}</option>
            </Select>
          )}
        </Field>
        <Field label="Kind" hint="Sets the standard default ICC." error={errors.kind?.message}>
          {(control) => (
            <Select {...control} {...register('kind')}>
              {measureKinds.map((k) => (
                <option key={k} value={k}>
                  {kindLabels[k]}
                </option>
              ))}
            </Select>
          )}
        </Field>
      </div>
      <div className="flex flex-wrap items-center gap-3">
        <Button type="submit" variant="secondary" busy={isSubmitting}>
          Add the measure
        </Button>
        <p aria-live="polite" className="text-sm text-ink-muted">
          {added}
        </p>
      </div>
    </form>
  );
}

/** The kind a new wave most likely is: the baseline first, then the outcome, then follow-ups. */
function nextWaveKind(waves: Wave[]): Wave['kind'] {
  if (!waves.some((w) => w.kind === 'baseline')) return 'baseline';
  if (!waves.some((w) => w.kind === 'outcome')) return 'outcome';
  return 'follow-up';
}

export function AddWaveForm({ waves, onAdd }: { waves: Wave[]; onAdd: (input: CreateWave) => Promise<unknown> }) {
  const [added, setAdded] = useState<string | null>(null);
  const form = useForm({
    resolver: zodResolver(createWaveSchema, plainMessages),
    defaultValues: { kind: nextWaveKind(waves), name: '', opensOn: '', closesOn: '' },
  });
  const {
    register,
    reset,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['kind', 'name', 'opensOn', 'closesOn'], async (input) => {
    setAdded(null);
    await onAdd(input);
    reset({ kind: nextWaveKind([...waves, { kind: input.kind } as Wave]), name: '', opensOn: '', closesOn: '' });
    setAdded(`${input.name} is added.`);
  });

  return (
    <form noValidate onSubmit={onSubmit} aria-label="Add a wave" className="space-y-4 rounded-lg border border-line bg-surface p-5">
      <h4 className="font-semibold">Add a wave</h4>
      {problem && <FormProblemAlert problem={problem} />}
      <div className="grid gap-4 sm:grid-cols-2">
        <Field label="Wave kind" error={errors.kind?.message}>
          {(control) => (
            <Select {...control} {...register('kind')}>
              {waveKinds.map((k) => (
                <option key={k} value={k}>
                  {waveKindLabels[k]}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="Wave name" hint="E.g. Autumn 2026." error={errors.name?.message}>
          {(control) => <TextInput {...control} autoComplete="off" {...register('name')} />}
        </Field>
        <Field label="Opens on" error={errors.opensOn?.message}>
          {(control) => <TextInput {...control} type="date" {...register('opensOn')} />}
        </Field>
        <Field label="Closes on" error={errors.closesOn?.message}>
          {(control) => <TextInput {...control} type="date" {...register('closesOn')} />}
        </Field>
      </div>
      <div className="flex flex-wrap items-center gap-3">
        <Button type="submit" variant="secondary" busy={isSubmitting}>
          Add the wave
        </Button>
        <p aria-live="polite" className="text-sm text-ink-muted">
          {added}
        </p>
      </div>
    </form>
  );
}

import { createComparisonSchema, type CreateComparison, type Measure, type Wave } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { Controller, useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, Select, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { emptyToUndefined } from '@/lib/form-errors';
import { ScheduleChoice } from './schedule-choice';
import { useApiSubmit } from '@/lib/use-api-submit';

interface AddComparisonFormProps {
  measures: Measure[];
  /** Waves after baseline: an outcome is compared after the intervention began. */
  waves: Wave[];
  onAdd: (input: CreateComparison) => Promise<unknown>;
  onCancel: () => void;
}

const fields = ['measureId', 'waveId', 'label', 'unitOfAnalysis', 'primaryTest', 'covariate', 'scheduleCron'] as const;

/** An analysis the sealed plan did not name. It is marked exploratory everywhere and can only run as a monitoring check. */
export function AddComparisonForm({ measures, waves, onAdd, onCancel }: AddComparisonFormProps) {
  const form = useForm({
    resolver: zodResolver(createComparisonSchema),
    defaultValues: {
      measureId: measures[0]?.id ?? '',
      waveId: waves[0]?.id ?? '',
      label: undefined,
      unitOfAnalysis: 'student' as const,
      primaryTest: 'welch' as const,
      covariate: 'baseline' as const,
      scheduleCron: null,
    },
  });
  const {
    register,
    control,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, fields, async (input) => {
    await onAdd(input);
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <div className="grid gap-5 sm:grid-cols-2">
        <Field label="Measure" error={errors.measureId?.message}>
          {(control) => (
            <Select {...control} {...register('measureId')}>
              {measures.map((m) => (
                <option key={m.id} value={m.id}>
                  {m.name}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="Wave" hint="Outcome and follow-up waves only." error={errors.waveId?.message}>
          {(control) => (
            <Select {...control} {...register('waveId')}>
              {waves.map((w) => (
                <option key={w.id} value={w.id}>
                  {w.name}
                </option>
              ))}
            </Select>
          )}
        </Field>
      </div>
      <Field label="Name (optional)" hint="Left empty, it is named after the measure and wave, marked exploratory." error={errors.label?.message}>
        {(control) => <TextInput {...control} autoComplete="off" {...register('label', { setValueAs: emptyToUndefined })} />}
      </Field>
      <div className="grid gap-5 sm:grid-cols-3">
        <Field label="Compare" error={errors.unitOfAnalysis?.message}>
          {(control) => (
            <Select {...control} {...register('unitOfAnalysis')}>
              <option value="student">Students</option>
              <option value="classroom">Classroom averages</option>
              <option value="school">School averages</option>
            </Select>
          )}
        </Field>
        <Field label="Main test" error={errors.primaryTest?.message}>
          {(control) => (
            <Select {...control} {...register('primaryTest')}>
              <option value="welch">Welch’s t test</option>
              <option value="student">Student’s pooled t test</option>
            </Select>
          )}
        </Field>
        <Field label="Baseline adjustment" error={errors.covariate?.message}>
          {(control) => (
            <Select {...control} {...register('covariate')}>
              <option value="baseline">Adjust for the baseline score</option>
              <option value="none">No adjustment</option>
            </Select>
          )}
        </Field>
      </div>
      <Controller
        control={control}
        name="scheduleCron"
        render={({ field }) => (
          <ScheduleChoice legend="Automatic monitoring checks while the wave is open" value={field.value ?? null} onChange={field.onChange} error={errors.scheduleCron?.message} />
        )}
      />
      <div className="flex flex-wrap gap-3">
        <Button type="submit" busy={isSubmitting}>
          Add the exploratory comparison
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

import { digestScheduleSchema, weekdayNames, type DigestSchedule } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useId, useState } from 'react';
import { useForm } from 'react-hook-form';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Field, Select, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { useApiSubmit } from '@/lib/use-api-submit';

interface ScheduleFormProps {
  schedule: DigestSchedule;
  onSave: (input: DigestSchedule) => Promise<unknown>;
}

const hours = Array.from({ length: 24 }, (_, h) => h);

/** When the weekly digest goes out while a wave is open, or that it does not. */
export function ScheduleForm({ schedule, onSave }: ScheduleFormProps) {
  const [saved, setSaved] = useState(false);
  const checkboxId = useId();
  const form = useForm({ resolver: zodResolver(digestScheduleSchema), defaultValues: schedule });
  const {
    register,
    watch,
    formState: { errors, isSubmitting, isDirty },
    reset,
  } = form;
  const enabled = watch('weeklyEnabled');

  const { onSubmit, problem } = useApiSubmit(form, Object.keys(digestScheduleSchema.shape), async (input) => {
    setSaved(false);
    await onSave(input);
    reset(input);
    setSaved(true);
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <div className="flex items-start gap-2">
        <input id={checkboxId} type="checkbox" className="mt-1 size-4 accent-[var(--color-accent)]" {...register('weeklyEnabled')} />
        <label htmlFor={checkboxId}>
          <span className="font-semibold">Send a weekly digest while a wave is open</span>
          <span className="block text-sm text-ink-muted">Digests on lock and “Send now” go out whatever this says.</span>
        </label>
      </div>
      <div className="grid gap-4 sm:grid-cols-3">
        <Field label="Day" error={errors.weekday?.message}>
          {(control) => (
            <Select {...control} disabled={!enabled} {...register('weekday', { valueAsNumber: true })}>
              {weekdayNames.map((name, i) => (
                <option key={name} value={i + 1}>
                  {name}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="Hour" error={errors.hour?.message}>
          {(control) => (
            <Select {...control} disabled={!enabled} {...register('hour', { valueAsNumber: true })}>
              {hours.map((h) => (
                <option key={h} value={h}>
                  {`${String(h).padStart(2, '0')}:00`}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="Time zone" hint="For example America/Chicago, or UTC." error={errors.timezone?.message}>
          {(control) => <TextInput {...control} disabled={!enabled} autoComplete="off" spellCheck={false} {...register('timezone')} />}
        </Field>
      </div>
      <div className="flex flex-wrap items-center gap-4">
        <Button type="submit" variant="secondary" busy={isSubmitting} disabled={!isDirty}>
          Save the schedule
        </Button>
        <div aria-live="polite">{saved && !isDirty && <Alert tone="success">The schedule is saved.</Alert>}</div>
      </div>
    </form>
  );
}

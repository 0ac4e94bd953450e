import { comparisonScheduleSchema, type Comparison, type ComparisonSchedule } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { applyApiError, emptyToNull, type FormProblem } from '@/lib/form-errors';

interface MonitoringScheduleFormProps {
  comparison: Comparison;
  onSave: (input: ComparisonSchedule) => Promise<unknown>;
  onCancel: () => void;
}

/** When a comparison's interim checks run by themselves while its wave is open; an empty cron stops them. */
export function MonitoringScheduleForm({ comparison, onSave, onCancel }: MonitoringScheduleFormProps) {
  const [problem, setProblem] = useState<FormProblem | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm({
    resolver: zodResolver(comparisonScheduleSchema),
    defaultValues: { scheduleCron: comparison.scheduleCron, scheduleTimezone: comparison.scheduleTimezone },
  });

  const onSubmit = handleSubmit(async (input) => {
    setProblem(null);
    try {
      await onSave(input);
    } catch (error) {
      setProblem(applyApiError(error, setError, ['scheduleCron', 'scheduleTimezone']));
    }
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <Field
        label="When to check"
        hint="Five cron fields (minute hour day month weekday), e.g. “0 2 * * *” for 02:00 every night. Leave empty to stop automatic checks."
        error={errors.scheduleCron?.message}
      >
        {(control) => <TextInput {...control} autoComplete="off" spellCheck={false} className="font-mono" {...register('scheduleCron', { setValueAs: emptyToNull })} />}
      </Field>
      <Field label="Time zone" hint="The zone the hours are read in, for example America/Chicago, or UTC." error={errors.scheduleTimezone?.message}>
        {(control) => <TextInput {...control} autoComplete="off" spellCheck={false} {...register('scheduleTimezone')} />}
      </Field>
      <p className="text-sm text-ink-muted">
        Each automatic check is a monitoring run: marked interim everywhere, never a confirmatory result. Checks stop when the wave closes or the result
        is locked.
      </p>
      <div className="flex flex-wrap gap-3">
        <Button type="submit" busy={isSubmitting}>
          Save the schedule
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

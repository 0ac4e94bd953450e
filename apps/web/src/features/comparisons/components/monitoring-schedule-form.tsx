import { comparisonScheduleSchema, type Comparison, type ComparisonSchedule } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { applyApiError, type FormProblem } from '@/lib/form-errors';
import { ScheduleChoice } from './schedule-choice';

interface MonitoringScheduleFormProps {
  comparison: Comparison;
  onSave: (input: ComparisonSchedule) => Promise<unknown>;
  onCancel: () => void;
}

/** When a comparison's interim checks run by themselves while its wave is open; 'only when someone runs a check' stops them. */
export function MonitoringScheduleForm({ comparison, onSave, onCancel }: MonitoringScheduleFormProps) {
  const [problem, setProblem] = useState<FormProblem | null>(null);
  const {
    register,
    control,
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
      <Controller
        control={control}
        name="scheduleCron"
        render={({ field }) => <ScheduleChoice legend="When to check" value={field.value ?? null} onChange={field.onChange} error={errors.scheduleCron?.message} />}
      />
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

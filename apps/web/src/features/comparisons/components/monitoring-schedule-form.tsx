import { comparisonScheduleSchema, type Comparison, type ComparisonSchedule } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { Controller, useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { ScheduleChoice } from './schedule-choice';
import { useApiSubmit } from '@/lib/use-api-submit';

interface MonitoringScheduleFormProps {
  comparison: Comparison;
  onSave: (input: ComparisonSchedule) => Promise<unknown>;
  onCancel: () => void;
}

/** When a comparison's interim checks run by themselves while its wave is open; 'only when someone runs a check' stops them. */
export function MonitoringScheduleForm({ comparison, onSave, onCancel }: MonitoringScheduleFormProps) {
  const form = useForm({
    resolver: zodResolver(comparisonScheduleSchema),
    defaultValues: { scheduleCron: comparison.scheduleCron, scheduleTimezone: comparison.scheduleTimezone },
  });
  const {
    register,
    control,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['scheduleCron', 'scheduleTimezone'], async (input) => {
    await onSave(input);
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

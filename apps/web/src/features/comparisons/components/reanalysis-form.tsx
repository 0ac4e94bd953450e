import { queueRunSchema, type QueueRun, type Run } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, TextArea } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { useApiSubmit } from '@/lib/use-api-submit';

interface ReanalysisFormProps {
  kind: Run['kind'];
  onQueue: (input: QueueRun) => Promise<unknown>;
  onCancel: () => void;
}

/** A comparison with a locked result is analysed again only with a recorded reason. */
export function ReanalysisForm({ kind, onQueue, onCancel }: ReanalysisFormProps) {
  const form = useForm({ resolver: zodResolver(queueRunSchema), defaultValues: { kind, reason: '' } });
  const {
    register,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['reason'], async (input) => {
    await onQueue(input);
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <Field
        label="Why are the data analysed again?"
        hint="For example: three score sheets were corrected after the lock. The reason is kept with the run and in the audit trail."
        error={errors.reason?.message}
      >
        {(control) => <TextArea {...control} rows={4} {...register('reason')} />}
      </Field>
      <div className="flex flex-wrap gap-3">
        <Button type="submit" busy={isSubmitting}>
          {kind === 'confirmatory' ? 'Queue the re-analysis' : 'Queue the monitoring check'}
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

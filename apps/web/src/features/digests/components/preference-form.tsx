import { digestFrequencies, digestFrequencyLabels, type DigestFrequency, type DigestPreference } from '@evenhand/entities';
import { useId, useState } from 'react';
import { useForm } from 'react-hook-form';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { useApiSubmit } from '@/lib/use-api-submit';

interface PreferenceFormProps {
  current: DigestPreference;
  /** The choice the e-mail's link suggested (e.g. "none" from "Stop these e-mails"). */
  suggested: DigestFrequency | null;
  onSave: (frequency: DigestFrequency) => Promise<DigestPreference>;
}

const after: Record<DigestFrequency, string> = {
  weekly: 'You will get a digest every week while scores are collected, and when a result is locked.',
  locked: 'You will get a digest only when a result is locked.',
  none: 'You will not get digests any more. My school still shows the same facts whenever you sign in.',
};

/** The choice behind a digest's "how often" links; the link's token is the proof, no sign-in needed. */
export function PreferenceForm({ current, suggested, onSave }: PreferenceFormProps) {
  const id = useId();
  const [saved, setSaved] = useState<DigestPreference | null>(null);
  const form = useForm<{ frequency: DigestFrequency }>({ defaultValues: { frequency: suggested ?? current.frequency } });
  const choice = form.watch('frequency');
  const { onSubmit, problem } = useApiSubmit(form, ['frequency'], async ({ frequency }) => {
    setSaved(await onSave(frequency));
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <fieldset>
        <legend className="font-semibold">How often should we e-mail you about your school?</legend>
        <p className="text-sm text-ink-muted">Now: {digestFrequencyLabels[saved?.frequency ?? current.frequency].toLowerCase()}.</p>
        <div className="mt-3 space-y-2">
          {digestFrequencies.map((f) => (
            <div key={f} className="flex items-start gap-2">
              <input
                id={`${id}-${f}`}
                type="radio"
                value={f}
                {...form.register('frequency')}
                className="mt-1 size-4 accent-[var(--color-accent)]"
              />
              <label htmlFor={`${id}-${f}`}>{digestFrequencyLabels[f]}</label>
            </div>
          ))}
        </div>
      </fieldset>
      <Button type="submit" busy={form.formState.isSubmitting}>
        {choice === 'none' ? 'Stop the digests' : 'Save my choice'}
      </Button>
      <div aria-live="polite">{saved && <Alert tone="success" title="Saved">{after[saved.frequency]}</Alert>}</div>
    </form>
  );
}

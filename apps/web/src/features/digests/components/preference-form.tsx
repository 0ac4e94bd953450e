import { digestFrequencies, digestFrequencyLabels, type DigestFrequency, type DigestPreference } from '@evenhand/entities';
import { useId, useState, type FormEvent } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';

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
  const [choice, setChoice] = useState<DigestFrequency>(suggested ?? current.frequency);
  const [saved, setSaved] = useState<DigestPreference | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  async function submit(e: FormEvent) {
    e.preventDefault();
    setBusy(true);
    setError(null);
    try {
      setSaved(await onSave(choice));
    } catch (err) {
      setError((err as Error).message);
    } finally {
      setBusy(false);
    }
  }

  return (
    <form onSubmit={submit} className="space-y-5">
      {error && <Alert tone="error">{error}</Alert>}
      <fieldset>
        <legend className="font-semibold">How often should we e-mail you about your school?</legend>
        <p className="text-sm text-ink-muted">Now: {digestFrequencyLabels[saved?.frequency ?? current.frequency].toLowerCase()}.</p>
        <div className="mt-3 space-y-2">
          {digestFrequencies.map((f) => (
            <div key={f} className="flex items-start gap-2">
              <input
                id={`${id}-${f}`}
                type="radio"
                name="frequency"
                value={f}
                checked={choice === f}
                onChange={() => setChoice(f)}
                className="mt-1 size-4 accent-[var(--color-accent)]"
              />
              <label htmlFor={`${id}-${f}`}>{digestFrequencyLabels[f]}</label>
            </div>
          ))}
        </div>
      </fieldset>
      <Button type="submit" busy={busy}>
        {choice === 'none' ? 'Stop the digests' : 'Save my choice'}
      </Button>
      <div aria-live="polite">{saved && <Alert tone="success" title="Saved">{after[saved.frequency]}</Alert>}</div>
    </form>
  );
}

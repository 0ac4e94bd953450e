import { saveSummarySchema, sheetSummarySchema, type ScoreSheetDetail } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useMemo, useState } from 'react';
import { useForm } from 'react-hook-form';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Field, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { useSaveSummary } from '@/features/score-sheets/api';
import { formatDateTime } from '@/lib/format';
import { useApiSubmit } from '@/lib/use-api-submit';

const asNumber = (v: unknown) => (v === '' || v === null || v === undefined ? undefined : Number(String(v).replace(',', '.')));

/**
 * A class summary (n, mean, SD) instead of per-student rows, where the plan allows it. The shared
 * summary schema checks it, plus the measure's range for the mean, as the server does.
 */
export function SummaryForm({ sheet }: { sheet: ScoreSheetDetail }) {
  const [savedAt, setSavedAt] = useState<string | null>(null);
  const save = useSaveSummary(sheet.id);
  // The shared schema, with the measure's range on the mean, so it is checked even while other fields are empty.
  const schema = useMemo(() => {
    const message = `Use a mean from ${sheet.minScore} to ${sheet.maxScore}, the measure's range`;
    const mean = sheetSummarySchema.shape.mean.min(sheet.minScore, message).max(sheet.maxScore, message);
    return saveSummarySchema.extend({ summary: sheetSummarySchema.extend({ mean }) });
  }, [sheet.minScore, sheet.maxScore]);
  const form = useForm({
    resolver: zodResolver(schema, { error: (issue) => (issue.code === 'invalid_type' ? 'Enter a number' : undefined) }),
    defaultValues: sheet.summary ? { summary: sheet.summary } : undefined,
  });
  const {
    register,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['summary'], async (input) => {
    const saved = await save.mutateAsync(input.summary);
    setSavedAt(saved.updatedAt);
  });

  const rowsWillGo = sheet.mode === 'rows' && sheet.counts.rows > 0;

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5 rounded-lg border border-line bg-surface p-6" aria-labelledby="summary-heading">
      <h2 id="summary-heading" className="text-xl font-semibold">
        Class summary
      </h2>
      <p className="max-w-prose text-ink-muted">
        The study's plan lets this classroom report only how many students were tested, their mean score and its standard
        deviation. Scores range from {sheet.minScore} to {sheet.maxScore}.
      </p>
      {rowsWillGo && (
        <Alert tone="info">Saving a summary removes the {sheet.counts.rows} per-student rows now on this sheet.</Alert>
      )}
      {problem && <FormProblemAlert problem={problem} />}
      <div className="grid gap-5 sm:grid-cols-3">
        <Field label="Students tested (n)" error={errors.summary?.n?.message}>
          {(control) => <TextInput {...control} inputMode="numeric" autoComplete="off" {...register('summary.n', { setValueAs: asNumber })} />}
        </Field>
        <Field label="Mean score" error={errors.summary?.mean?.message}>
          {(control) => <TextInput {...control} inputMode="decimal" autoComplete="off" {...register('summary.mean', { setValueAs: asNumber })} />}
        </Field>
        <Field label="Standard deviation (SD)" error={errors.summary?.sd?.message}>
          {(control) => <TextInput {...control} inputMode="decimal" autoComplete="off" {...register('summary.sd', { setValueAs: asNumber })} />}
        </Field>
      </div>
      <div className="flex flex-wrap items-center gap-4">
        <Button type="submit" busy={isSubmitting}>
          Save the summary
        </Button>
        <p role="status" className="text-accent-strong">
          {savedAt ? `Saved ${formatDateTime(savedAt)}` : ''}
        </p>
      </div>
    </form>
  );
}

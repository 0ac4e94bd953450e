import { returnSheetSchema, type ScoreSheet } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { Field } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { useMoveSheet } from '@/features/score-sheets/api';
import { useApiSubmit } from '@/lib/use-api-submit';

/** The coordinator's verdict on a sheet: accept a submitted one, or return it with reasons. */
export function ReviewActions({ sheet }: { sheet: ScoreSheet }) {
  const move = useMoveSheet(sheet.id);
  const [returning, setReturning] = useState(false);
  const [notice, setNotice] = useState<string | null>(null);

  const canAccept = sheet.state === 'submitted' && !sheet.locked;
  const canReturn = (sheet.state === 'submitted' || sheet.state === 'accepted') && !sheet.locked;

  return (
    <section aria-labelledby="review-heading" className="space-y-4 rounded-lg border border-line bg-surface p-6">
      <h2 id="review-heading" className="text-xl font-semibold">
        Review
      </h2>
      <div aria-live="polite">{notice && <Alert tone="success">{notice}</Alert>}</div>
      {move.error && !returning && <Alert tone="error">{move.error.message}</Alert>}
      {canAccept || canReturn ? (
        <>
          <p className="max-w-prose text-ink-muted">
            {canAccept
              ? 'Accept the sheet when its scores look right; it becomes read-only. Return it if the teacher should check or fix something — they see your reasons on their sheet.'
              : 'This sheet is accepted. If something is wrong after all, return it to the teacher with your reasons.'}
          </p>
          <div className="flex flex-wrap gap-3">
            {canAccept && (
              <Button
                busy={move.isPending && move.variables?.step === 'accept'}
                onClick={async () => {
                  setNotice(null);
                  try {
                    await move.mutateAsync({ step: 'accept' });
                    setNotice(`Accepted. ${sheet.classroomName}'s sheet is now read-only.`);
                  } catch {
                    // Shown above.
                  }
                }}
              >
                Accept
              </Button>
            )}
            {canReturn && (
              <Button
                variant="secondary"
                onClick={() => {
                  setNotice(null);
                  move.reset();
                  setReturning(true);
                }}
              >
                Return with reasons
              </Button>
            )}
          </div>
        </>
      ) : (
        <p className="max-w-prose text-ink-muted">
          {sheet.locked
            ? 'A locked result was computed from this sheet, so it can no longer be returned.'
            : sheet.state === 'returned'
              ? 'This sheet is back with its teacher for corrections. It comes back here when they submit it again.'
              : 'Nothing to review yet: the teacher has not submitted this sheet.'}
        </p>
      )}

      <Dialog
        open={returning}
        title="Return the sheet to its teacher"
        description={`${sheet.teacherName} sees your reasons on the sheet and in My classes, fixes it and submits it again.`}
        onClose={() => setReturning(false)}
      >
        {returning && (
          <ReturnForm
            onCancel={() => setReturning(false)}
            onReturn={async ({ reasons }) => {
              await move.mutateAsync({ step: 'return', reasons });
              setReturning(false);
              setNotice(`Returned to ${sheet.teacherName} with your reasons.`);
            }}
          />
        )}
      </Dialog>
    </section>
  );
}

type ReturnSheet = z.infer<typeof returnSheetSchema>;

function ReturnForm({ onReturn, onCancel }: { onReturn: (input: ReturnSheet) => Promise<void>; onCancel: () => void }) {
  const form = useForm({ resolver: zodResolver(returnSheetSchema), defaultValues: { reasons: '' } });
  const {
    register,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['reasons'], async (input) => {
    await onReturn(input);
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <Field
        label="Reasons"
        hint="Say what to check or fix, naming student codes where it helps — for example “LV-0042 reads 12 in spring, far below autumn”."
        error={errors.reasons?.message}
      >
        {(control) => (
          <textarea
            {...control}
            rows={5}
            className="w-full rounded-md border border-line-strong bg-surface px-3 py-2 text-base text-ink aria-invalid:border-2 aria-invalid:border-danger"
            {...register('reasons')}
          />
        )}
      </Field>
      <div className="flex flex-wrap gap-3">
        <Button type="submit" busy={isSubmitting}>
          Return the sheet
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

import { useState } from 'react';
import type { FieldValues, UseFormReturn } from 'react-hook-form';
import { applyApiError, type FormProblem } from '@/lib/form-errors';

/**
 * The one way a form sends to the API: clears the last problem, runs `send` with the validated values, and when the
 * API refuses puts its field issues on the form's `fields` and keeps the rest as `problem`, for `<FormProblemAlert>`
 * above the fields. `send` may throw; anything it does after the request (reset, a message) runs only on success.
 * `clearProblem` is for a form that starts over another way (e.g. filled in from a list); `sendOther` sends what a
 * confirmation dialog of the form asks for, with the same handling of a refusal.
 */
export function useApiSubmit<TFieldValues extends FieldValues, TContext, TValues>(
  form: UseFormReturn<TFieldValues, TContext, TValues>,
  fields: readonly string[],
  send: (values: TValues) => Promise<unknown>,
) {
  const [problem, setProblem] = useState<FormProblem | null>(null);
  const sendOther = async (other: () => Promise<unknown>) => {
    setProblem(null);
    try {
      await other();
    } catch (error) {
      setProblem(applyApiError(error, form.setError, fields));
    }
  };
  const onSubmit = form.handleSubmit((values) => sendOther(() => send(values)));
  return { onSubmit, problem, clearProblem: () => setProblem(null), sendOther };
}

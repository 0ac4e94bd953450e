import { passwordResetRequestSchema } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { Field, TextInput } from '@/components/ui/field';
import { useRequestPasswordReset } from '@/features/auth/api';
import { applyApiError, type FormProblem } from '@/lib/form-errors';

export function ForgotPasswordForm() {
  const requestReset = useRequestPasswordReset();
  const [problem, setProblem] = useState<FormProblem | null>(null);
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors },
  } = useForm({ resolver: zodResolver(passwordResetRequestSchema), defaultValues: { email: '' } });

  const onSubmit = handleSubmit(async ({ email }) => {
    setProblem(null);
    try {
      await requestReset.mutateAsync(email);
    } catch (error) {
      setProblem(applyApiError(error, setError, ['email']));
    }
  });

  return (
    <>
      <div aria-live="polite">{requestReset.data && <Alert tone="success">{requestReset.data.message}</Alert>}</div>
      {!requestReset.data && (
        <form noValidate onSubmit={onSubmit} className="space-y-5">
          {problem && <FormProblemAlert problem={problem} />}
          <Field label="E-mail address" error={errors.email?.message}>
            {(control) => <TextInput {...control} type="email" autoComplete="username" {...register('email')} />}
          </Field>
          <Button type="submit" busy={requestReset.isPending}>
            Send the link
          </Button>
        </form>
      )}
    </>
  );
}

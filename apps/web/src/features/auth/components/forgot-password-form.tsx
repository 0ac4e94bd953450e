import { passwordResetRequestSchema } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { Field, TextInput } from '@/components/ui/field';
import { useRequestPasswordReset } from '@/features/auth/api';
import { useApiSubmit } from '@/lib/use-api-submit';

export function ForgotPasswordForm() {
  const requestReset = useRequestPasswordReset();
  const form = useForm({ resolver: zodResolver(passwordResetRequestSchema), defaultValues: { email: '' } });
  const {
    register,
    formState: { errors },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['email'], async ({ email }) => {
    await requestReset.mutateAsync(email);
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

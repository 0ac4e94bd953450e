import { setPasswordFormSchema } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Link } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { Field, TextInput } from '@/components/ui/field';
import { useConfirmPasswordReset } from '@/features/auth/api';
import { useApiSubmit } from '@/lib/use-api-submit';

/** Used by invitation and password-reset links alike: both carry a single-use token. */
export function SetPasswordForm({ token }: { token: string }) {
  const confirm = useConfirmPasswordReset();
  const form = useForm({ resolver: zodResolver(setPasswordFormSchema), defaultValues: { password: '', repeat: '' } });
  const {
    register,
    formState: { errors },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['password'], async ({ password }) => {
    await confirm.mutateAsync({ token, password });
  });

  if (confirm.data) {
    return (
      <div className="space-y-5">
        <Alert tone="success">{confirm.data.message}</Alert>
        <Link to="/sign-in" className="inline-block font-semibold">
          Go to sign in
        </Link>
      </div>
    );
  }

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && (
        <FormProblemAlert problem={problem}>
          <p className="mt-1">
            <Link to="/forgot-password">Ask for a new link</Link>
          </p>
        </FormProblemAlert>
      )}
      <Field label="New password" hint="At least 10 characters. A few unrelated words make a strong one." error={errors.password?.message}>
        {(control) => <TextInput {...control} type="password" autoComplete="new-password" {...register('password')} />}
      </Field>
      <Field label="Repeat the new password" error={errors.repeat?.message}>
        {(control) => <TextInput {...control} type="password" autoComplete="new-password" {...register('repeat')} />}
      </Field>
      <Button type="submit" busy={confirm.isPending}>
        Save the password
      </Button>
    </form>
  );
}

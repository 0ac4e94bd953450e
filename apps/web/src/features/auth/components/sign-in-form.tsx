import { loginRequestSchema, type SessionUser, type SignInOptions } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useRef } from 'react';
import { useForm } from 'react-hook-form';
import { Link } from 'react-router-dom';
import { Button } from '@/components/ui/button';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { Field, TextInput } from '@/components/ui/field';
import { AuthCard } from '@/features/auth/components/auth-card';
import { DemoAccounts } from '@/features/auth/components/demo-accounts';
import { DistrictSignIn, DistrictSignInProblem } from '@/features/auth/components/district-sign-in';
import { useSignIn } from '@/features/auth/api';
import { useApiSubmit } from '@/lib/use-api-submit';

export function SignInForm({
  onSignedIn,
  options,
  next,
  districtProblem,
}: {
  onSignedIn: (user: SessionUser) => void;
  /** What the API offers; until it answers, the password form alone. */
  options: SignInOptions | undefined;
  /** Where to return after signing in with the district account. */
  next: string | null;
  /** The API's ticket explaining why the last sign-in with the district account did not succeed. */
  districtProblem: string | null;
}) {
  const demo = options?.demo ?? null;
  const signIn = useSignIn();
  const submitRef = useRef<HTMLButtonElement>(null);
  const form = useForm({ resolver: zodResolver(loginRequestSchema), defaultValues: { email: '', password: '' } });
  const {
    register,
    setValue,
    formState: { errors },
  } = form;

  const { onSubmit, problem, clearProblem } = useApiSubmit(form, ['email', 'password'], async (credentials) => {
    const { user } = await signIn.mutateAsync(credentials);
    onSignedIn(user);
  });

  return (
    <div className="grid gap-8 lg:grid-cols-[28rem_20rem] lg:items-start">
      <AuthCard title="Sign in" intro="Use the e-mail address your district registered for you.">
        {districtProblem && <DistrictSignInProblem ticket={districtProblem} />}
        {options?.districtSignIn && <DistrictSignIn next={next} passwordSignIn={options.passwordSignIn} />}
        <form noValidate onSubmit={onSubmit} className="space-y-5">
          {problem && <FormProblemAlert problem={problem} />}
          <Field label="E-mail address" error={errors.email?.message}>
            {(control) => <TextInput {...control} type="email" autoComplete="username" {...register('email')} />}
          </Field>
          <Field label="Password" error={errors.password?.message}>
            {(control) => <TextInput {...control} type="password" autoComplete="current-password" {...register('password')} />}
          </Field>
          <div className="flex flex-wrap items-center justify-between gap-4 pt-1">
            <Button ref={submitRef} type="submit" busy={signIn.isPending}>
              Sign in
            </Button>
            <Link to="/forgot-password">Forgot your password?</Link>
          </div>
        </form>
      </AuthCard>

      {demo && (
        <DemoAccounts
          demo={demo}
          districtSignIn={options?.districtSignIn ?? false}
          onPick={(email, password) => {
            setValue('email', email, { shouldValidate: true });
            setValue('password', password, { shouldValidate: true });
            clearProblem();
            submitRef.current?.focus();
          }}
        />
      )}
    </div>
  );
}

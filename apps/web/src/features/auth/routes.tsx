import { useQuery } from '@tanstack/react-query';
import { Link, useNavigate, useSearchParams } from 'react-router-dom';
import { signInOptionsQueryOptions } from '@/features/auth/api';
import { AcceptRole } from '@/features/auth/components/accept-role';
import { AuthCard } from '@/features/auth/components/auth-card';
import { ForgotPasswordForm } from '@/features/auth/components/forgot-password-form';
import { SetPasswordForm } from '@/features/auth/components/set-password-form';
import { SignInForm } from '@/features/auth/components/sign-in-form';
import { homePathFor, safeReturnPath } from '@/lib/navigation';

export function SignInPage() {
  const navigate = useNavigate();
  const [params] = useSearchParams();
  // Only the API knows whether it runs in production: the same build serves both.
  const options = useQuery(signInOptionsQueryOptions());
  const next = safeReturnPath(params.get('next'));
  return (
    <SignInForm
      options={options.data}
      next={next}
      districtProblem={params.get('district_problem')}
      onSignedIn={(user) => {
        navigate(next ?? homePathFor(user.roles) ?? '/', { replace: true });
      }}
    />
  );
}

export function ForgotPasswordPage() {
  return (
    <AuthCard
      title="Forgot your password?"
      intro="Enter the e-mail address of your account. We will send you a link to choose a new password; it works once, within an hour."
    >
      <ForgotPasswordForm />
      <p className="mt-6">
        <Link to="/sign-in">Back to sign in</Link>
      </p>
    </AuthCard>
  );
}

export function SetPasswordPage() {
  const [params] = useSearchParams();
  const token = params.get('token');
  return (
    <AuthCard title="Choose your password" intro="Choose the password you will sign in with from now on.">
      {token ? (
        <SetPasswordForm token={token} />
      ) : (
        <p>
          This link is missing its code. Open the link from your e-mail again, or{' '}
          <Link to="/forgot-password">ask for a new link</Link>.
        </p>
      )}
    </AuthCard>
  );
}

/** Opened from the e-mail that names someone for a school role; signed in first (the layout asks). */
export function AcceptRolePage() {
  const [params] = useSearchParams();
  const token = params.get('token');
  return (
    <AuthCard title="Accept your role" intro="Check that the e-mail was meant for the account you are signed in with.">
      {token ? <AcceptRole token={token} /> : <p>This link is missing its code. Open the link from your e-mail again.</p>}
    </AuthCard>
  );
}

import type { PasswordSignIn } from '@evenhand/entities';
import { useQuery } from '@tanstack/react-query';
import { Alert } from '@/components/ui/alert';
import { ButtonLink } from '@/components/ui/button';
import { districtProblemQueryOptions, districtSignInHref } from '@/features/auth/api';

/** The way in for districts with an identity provider; the password form below stays for the admin (and, if allowed, everyone). */
export function DistrictSignIn({ next, passwordSignIn }: { next: string | null; passwordSignIn: PasswordSignIn }) {
  return (
    <div className="mb-6 space-y-4">
      <ButtonLink href={districtSignInHref(next)} className="w-full text-center">
        Sign in with your district account
      </ButtonLink>
      <p className="flex items-center gap-3 text-sm text-ink-muted before:h-px before:flex-1 before:bg-line after:h-px after:flex-1 after:bg-line">
        {passwordSignIn === 'everyone' ? 'or with your Evenhand password' : 'Evenhand passwords: district admin only'}
      </p>
    </div>
  );
}

/** What the API says about a sign-in with the district account that did not end signed in, and whom to ask. */
export function DistrictSignInProblem({ ticket }: { ticket: string }) {
  const problem = useQuery(districtProblemQueryOptions(ticket));
  if (problem.isPending) return null;
  return (
    <div className="mb-6 [overflow-wrap:anywhere]">
      <Alert tone="error" title="You are not signed in">
        {problem.data?.message ?? problem.error?.message}
      </Alert>
    </div>
  );
}

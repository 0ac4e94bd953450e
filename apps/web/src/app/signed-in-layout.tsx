import { roleLabels, type SessionUser } from '@evenhand/entities';
import type { ReactNode } from 'react';
import { Navigate, NavLink, Outlet, useLocation, useNavigation } from 'react-router-dom';
import { SkipLink, Wordmark } from '@/app/chrome';
import { Button } from '@/components/ui/button';
import { useSession, useSignOut } from '@/features/auth/api';
import { navigationFor, signInPath } from '@/lib/navigation';

/** The frame of every signed-in page: the person's navigation, who they are, and Sign out. */
export function SignedInFrame({ user, children }: { user: SessionUser; children: ReactNode }) {
  const navigation = useNavigation();
  const signOut = useSignOut();
  const roleNames = [...new Set(user.roles.map((g) => roleLabels[g.role]))].join(', ');

  return (
    <div className="min-h-screen">
      <SkipLink />
      <div
        aria-hidden="true"
        className={`fixed inset-x-0 top-0 h-1 bg-accent transition-opacity ${navigation.state === 'loading' ? 'animate-pulse opacity-100' : 'opacity-0'}`}
      />
      <header className="border-b border-line bg-surface">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-10 gap-y-3 px-6 py-4">
          <Wordmark to="/" />
          <nav aria-label="Main" className="flex-1">
            <ul className="flex flex-wrap gap-2">
              {navigationFor(user.roles).map((area) => (
                <li key={area.path}>
                  <NavLink
                    to={area.path}
                    className={({ isActive }) =>
                      `block rounded-md px-3 py-1.5 font-semibold no-underline ${
                        isActive ? 'bg-accent-soft text-accent-strong' : 'text-ink hover:bg-sunken hover:text-ink'
                      }`
                    }
                  >
                    {area.label}
                  </NavLink>
                </li>
              ))}
            </ul>
          </nav>
          <div className="flex items-center gap-4">
            <p className="text-right leading-tight">
              <span className="block font-semibold">{user.name}</span>
              <span className="block text-sm text-ink-muted">{roleNames}</span>
            </p>
            <Button variant="secondary" size="sm" busy={signOut.isPending} onClick={() => signOut.mutate()}>
              Sign out
            </Button>
          </div>
        </div>
        {signOut.error && (
          <p role="alert" className="mx-auto max-w-7xl px-6 pb-3 text-sm font-semibold text-danger">
            {signOut.error.message}
          </p>
        )}
      </header>
      <main id="main" tabIndex={-1} className="mx-auto max-w-7xl px-6 py-10 focus:outline-none">
        {children}
      </main>
    </div>
  );
}

export function SignedInLayout() {
  const { data: user } = useSession();
  const location = useLocation();
  // The session can end while a page is open (it expired, or the account was deactivated).
  if (!user) return <Navigate to={signInPath(location.pathname + location.search)} replace />;
  return (
    <SignedInFrame user={user}>
      <Outlet />
    </SignedInFrame>
  );
}

import { roleLabels } from '@evenhand/entities';
import type { ReactNode } from 'react';
import { isRouteErrorResponse, Link, useLocation, useRouteError } from 'react-router-dom';
import { NotFoundPage } from '@/app/not-found-page';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { PageHeader } from '@/components/ui/page-header';
import { useSession } from '@/features/auth/api';
import { ApiError } from '@/lib/api-client';
import { signInPath } from '@/lib/navigation';

function NotAvailableForRole({ message }: { message?: string }) {
  const { data: user } = useSession();
  const roles = user ? [...new Set(user.roles.map((g) => roleLabels[g.role]))].join(', ') : null;
  return (
    <>
      <PageHeader title="Not available for your role" />
      <div className="max-w-prose space-y-4">
        <p>
          {roles ? `You are signed in as ${roles}, and this page belongs to other roles.` : 'This page belongs to other roles than yours.'} If
          you need it for your work, ask your district admin to give you the role that includes it.
        </p>
        {message && <p className="text-ink-muted">The server's answer: {message}</p>}
        <p>
          <Link to="/">Go to your home page</Link>
        </p>
      </div>
    </>
  );
}

/** A page's code that no longer loads, most often because a new release went out while the page was open (each browser words it its own way). */
const isUnloadableCode = (error: unknown) =>
  error instanceof Error && /dynamically imported module|module script failed|unable to preload css/i.test(error.message);

function errorContent(error: unknown, here: string): ReactNode {
  if ((isRouteErrorResponse(error) && error.status === 404) || (error instanceof ApiError && error.code === 'not_found')) {
    return <NotFoundPage />;
  }
  if (isRouteErrorResponse(error) && error.status === 403) return <NotAvailableForRole />;
  if (error instanceof ApiError && error.code === 'forbidden') return <NotAvailableForRole message={error.message} />;
  if (error instanceof ApiError && error.code === 'unauthenticated') {
    return (
      <>
        <PageHeader title="Please sign in again" />
        <Alert tone="info">{error.message}</Alert>
        <p className="mt-6">
          <Link to={signInPath(here)}>Sign in and come back to this page</Link>
        </p>
      </>
    );
  }
  if (isUnloadableCode(error)) {
    return (
      <>
        <PageHeader title="Evenhand needs a reload" />
        <Alert tone="info">
          This page could not be loaded, most often because Evenhand was updated while it was open. Reloading gets the current version;
          everything already saved stays as it is.
        </Alert>
        <div className="mt-6">
          <Button onClick={() => window.location.reload()}>Reload the page</Button>
        </div>
      </>
    );
  }
  return (
    <>
      <PageHeader title="This page could not be opened" />
      <Alert tone="error">
        {error instanceof ApiError ? error.message : 'Something unexpected went wrong in this page. The problem is on our side, not yours.'}
      </Alert>
      <div className="mt-6 flex flex-wrap items-center gap-4">
        <Button onClick={() => window.location.reload()}>Reload the page</Button>
        <Link to="/">Go to your home page</Link>
      </div>
    </>
  );
}

/** The one place that shows why a page could not load: refusals get their own page, anything else the API's message. */
export function RouteError() {
  const error = useRouteError();
  const location = useLocation();
  return <div className="w-full max-w-3xl">{errorContent(error, location.pathname + location.search)}</div>;
}

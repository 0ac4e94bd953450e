import { Link, useLocation } from 'react-router-dom';
import { PublicLayout } from '@/app/public-layout';
import { SignedInFrame } from '@/app/signed-in-layout';
import { PageHeader } from '@/components/ui/page-header';
import { useSession } from '@/features/auth/api';

export function NotFoundPage() {
  const { pathname } = useLocation();
  return (
    <div className="w-full max-w-3xl">
      <PageHeader title="Page not found" />
      <p className="max-w-prose">
        There is no page at <code className="font-mono">{pathname}</code>. The link may be out of date, or the address mistyped.
      </p>
      <p className="mt-4">
        <Link to="/">Go to your home page</Link>
      </p>
    </div>
  );
}

/** An unknown address, framed by the person's navigation when they are signed in. */
export function NotFoundRoute() {
  const { data: user } = useSession();
  return user ? (
    <SignedInFrame user={user}>
      <NotFoundPage />
    </SignedInFrame>
  ) : (
    <PublicLayout>
      <NotFoundPage />
    </PublicLayout>
  );
}

import { Link, useLocation } from 'react-router-dom';
import { PageHeader } from '@/components/ui/page-header';

export function NotFoundPage() {
  const { pathname } = useLocation();
  return (
    <>
      <PageHeader title="Page not found" />
      <p className="max-w-prose">
        There is no page at <code className="font-mono">{pathname}</code>. The link may be out of date, or the address mistyped.
      </p>
      <p className="mt-4">
        <Link to="/">Go to your home page</Link>
      </p>
    </>
  );
}

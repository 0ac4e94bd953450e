import type { ReactNode } from 'react';
import { Outlet } from 'react-router-dom';
import { SkipLink, Wordmark } from '@/app/chrome';

/** The frame of the pages people see before signing in; also frames errors that happen before any layout. */
export function PublicLayout({ children }: { children?: ReactNode }) {
  return (
    <div className="min-h-screen">
      <SkipLink />
      <header className="mx-auto flex max-w-5xl px-6 pt-8">
        <Wordmark to="/" />
      </header>
      <main id="main" tabIndex={-1} className="mx-auto flex max-w-5xl justify-center px-6 py-12 focus:outline-none">
        {children ?? <Outlet />}
      </main>
    </div>
  );
}

import { Link } from 'react-router-dom';

export function SkipLink() {
  return (
    <a
      href="#main"
      className="sr-only rounded-md bg-accent px-4 py-2 font-semibold text-white focus:not-sr-only focus:fixed focus:top-3 focus:left-3 focus:z-50"
    >
      Skip to the page content
    </a>
  );
}

export function Wordmark({ to }: { to: string }) {
  return (
    <Link to={to} className="flex items-center gap-2 text-xl font-bold tracking-tight text-ink no-underline hover:text-accent">
      <svg viewBox="0 0 32 32" className="size-7" aria-hidden="true">
        <rect width="32" height="32" rx="7" fill="var(--color-accent)" />
        <path d="M7 19h8v4H7zM17 15h8v8h-8z" fill="var(--color-paper)" />
      </svg>
      Evenhand
    </Link>
  );
}

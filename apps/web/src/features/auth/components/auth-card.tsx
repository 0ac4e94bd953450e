import { useId, type ReactNode } from 'react';

export function AuthCard({ title, intro, children }: { title: string; intro?: ReactNode; children: ReactNode }) {
  const titleId = useId();
  return (
    <section aria-labelledby={titleId} className="w-full max-w-md rounded-lg border border-line bg-surface p-6 shadow-sm sm:p-8">
      <title>{`${title} · Evenhand`}</title>
      <h1 id={titleId} className="text-3xl font-semibold tracking-tight">
        {title}
      </h1>
      {intro && <div className="mt-2 text-ink-muted">{intro}</div>}
      <div className="mt-6">{children}</div>
    </section>
  );
}

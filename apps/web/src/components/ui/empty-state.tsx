import type { ReactNode } from 'react';

export function EmptyState({ title, children, action }: { title: string; children?: ReactNode; action?: ReactNode }) {
  return (
    <section className="rounded-lg border border-dashed border-line-strong bg-surface/60 px-6 py-10 text-center">
      <h2 className="text-xl font-semibold">{title}</h2>
      {children && <div className="mx-auto mt-3 max-w-prose space-y-3 text-ink-muted">{children}</div>}
      {action && <div className="mt-6">{action}</div>}
    </section>
  );
}

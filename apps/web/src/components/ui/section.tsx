import { useId, type ReactNode } from 'react';

interface SectionProps {
  title: string;
  description?: ReactNode;
  /** Buttons beside the heading, e.g. "Add a classroom". */
  actions?: ReactNode;
  children: ReactNode;
}

/** A titled part of a page: a landmark named by its h2, with an optional description and actions. */
export function Section({ title, description, actions, children }: SectionProps) {
  const id = useId();
  return (
    <section aria-labelledby={id} className="space-y-4">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div className="max-w-prose">
          <h2 id={id} className="text-xl font-semibold">
            {title}
          </h2>
          {description && <p className="mt-1 text-ink-muted">{description}</p>}
        </div>
        {actions && <div className="flex flex-wrap gap-3">{actions}</div>}
      </div>
      {children}
    </section>
  );
}

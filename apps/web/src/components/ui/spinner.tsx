export function Spinner({ className = 'size-5' }: { className?: string }) {
  return (
    <svg className={`animate-spin ${className}`} viewBox="0 0 24 24" fill="none" aria-hidden="true">
      <circle cx="12" cy="12" r="9" stroke="currentColor" strokeOpacity="0.25" strokeWidth="3" />
      <path d="M21 12a9 9 0 0 0-9-9" stroke="currentColor" strokeWidth="3" strokeLinecap="round" />
    </svg>
  );
}

/** A waiting message that screen readers announce. */
export function Loading({ label }: { label: string }) {
  return (
    <div role="status" className="flex items-center gap-3 py-6 text-ink-muted">
      <Spinner />
      <span>{label}</span>
    </div>
  );
}

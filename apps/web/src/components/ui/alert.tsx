import type { ReactNode } from 'react';

type Tone = 'error' | 'success' | 'info' | 'caution';

const tones: Record<Tone, string> = {
  error: 'border-danger/50 bg-danger-soft text-ink',
  success: 'border-accent/40 bg-accent-soft text-ink',
  info: 'border-line bg-sunken text-ink',
  caution: 'border-caution/50 bg-caution-soft text-ink',
};

/** Errors interrupt (role="alert"); confirmations and notes wait their turn (role="status"). */
export function Alert({ tone = 'info', title, children }: { tone?: Tone; title?: string; children?: ReactNode }) {
  return (
    <div role={tone === 'error' ? 'alert' : 'status'} className={`rounded-md border-l-4 border px-4 py-3 ${tones[tone]}`}>
      {title && <p className="font-semibold">{title}</p>}
      {children && <div className={title ? 'mt-1' : undefined}>{children}</div>}
    </div>
  );
}

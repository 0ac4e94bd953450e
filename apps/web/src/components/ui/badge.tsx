import type { ReactNode } from 'react';

type Tone = 'accent' | 'caution' | 'muted';

const tones: Record<Tone, string> = {
  accent: 'bg-accent-soft text-accent-strong',
  caution: 'bg-caution-soft text-caution',
  muted: 'bg-sunken text-ink-muted',
};

export function Badge({ tone, children }: { tone: Tone; children: ReactNode }) {
  return <span className={`inline-block rounded-full px-2.5 py-0.5 text-sm font-semibold whitespace-nowrap ${tones[tone]}`}>{children}</span>;
}

import type { DigestKind, DigestState } from '@evenhand/entities';
import { Badge } from '@/components/ui/badge';

export const digestStateLabels: Record<DigestState, string> = {
  queued: 'Queued',
  sent: 'Sent',
  retrying: 'Retrying',
  undeliverable: 'Undeliverable',
};

export const digestKindLabels: Record<DigestKind, string> = {
  weekly: 'Weekly',
  lock: 'Result locked',
  manual: 'Sent now',
};

const tones = { queued: 'muted', sent: 'accent', retrying: 'caution', undeliverable: 'caution' } as const;

/** A shape per state, so the state reads without colour: ○ queued, ✓ sent, ↻ retrying, ✕ undeliverable. */
function DigestStateMark({ state }: { state: DigestState }) {
  return (
    <svg viewBox="0 0 16 16" className="size-3.5 shrink-0" aria-hidden="true" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round">
      {state === 'queued' && <circle cx="8" cy="8" r="5.5" />}
      {state === 'sent' && <path d="M3 8.5 6.5 12 13 4.5" />}
      {state === 'retrying' && <path d="M13 8a5 5 0 1 1-1.6-3.7M13 2.5v3h-3" />}
      {state === 'undeliverable' && <path d="M4 4l8 8M12 4l-8 8" />}
    </svg>
  );
}

export function DigestStateBadge({ state }: { state: DigestState }) {
  return (
    <Badge tone={tones[state]}>
      <span className="inline-flex items-center gap-1.5">
        <DigestStateMark state={state} />
        {digestStateLabels[state]}
      </span>
    </Badge>
  );
}

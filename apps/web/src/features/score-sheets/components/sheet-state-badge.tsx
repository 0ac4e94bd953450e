import type { SheetState } from '@evenhand/entities';
import { Badge } from '@/components/ui/badge';
import { sheetStateLabels } from '@/features/score-sheets/sheet-state';

const tones = { open: 'muted', submitted: 'muted', accepted: 'accent', returned: 'caution' } as const;

/** A shape per state, so the state reads without colour: ○ open, ↑ submitted, ✓ accepted, ↩ returned. */
export function SheetStateMark({ state, className = 'size-4' }: { state: SheetState; className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={`shrink-0 ${className}`} aria-hidden="true" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round">
      {state === 'open' && <circle cx="8" cy="8" r="5.5" />}
      {state === 'submitted' && <path d="M8 13V3M4 7l4-4 4 4" />}
      {state === 'accepted' && <path d="M3 8.5 6.5 12 13 4.5" />}
      {state === 'returned' && <path d="M6 3 2.5 6.5 6 10M3 6.5h6.5a4 4 0 0 1 0 8H7" />}
    </svg>
  );
}

export function SheetStateBadge({ state }: { state: SheetState }) {
  return (
    <Badge tone={tones[state]}>
      <span className="inline-flex items-center gap-1.5">
        <SheetStateMark state={state} className="size-3.5" />
        {sheetStateLabels[state]}
      </span>
    </Badge>
  );
}

import type { ScoreSheet, SheetState } from '@evenhand/entities';
import { formatDateTime, formatDay, today } from '@/lib/format';

export const sheetStateLabels: Record<SheetState, string> = {
  open: 'Open',
  submitted: 'Submitted',
  accepted: 'Accepted',
  returned: 'Returned',
};

export type WindowState = 'not-yet' | 'open' | 'closed';

/** Where today falls in the sheet's wave, on the calendar (the API judges the same by its own date). */
export function waveWindow(sheet: Pick<ScoreSheet, 'opensOn' | 'closesOn'>, day = today()): WindowState {
  if (day < sheet.opensOn) return 'not-yet';
  if (day > sheet.closesOn) return 'closed';
  return 'open';
}

export type NextStep =
  | { kind: 'enter'; label: string }
  | { kind: 'fix'; label: string; reasons: string }
  | { kind: 'waiting'; label: string }
  | { kind: 'accepted'; label: string }
  | { kind: 'not-yet'; label: string }
  | { kind: 'closed'; label: string };

/** What the teacher does next with a sheet, in the words My classes shows. */
export function nextStep(sheet: ScoreSheet, day = today()): NextStep {
  switch (sheet.state) {
    case 'returned':
      return { kind: 'fix', label: 'Fix and resubmit', reasons: sheet.returnReasons ?? '' };
    case 'submitted':
      return { kind: 'waiting', label: 'Waiting for the coordinator' };
    case 'accepted':
      return { kind: 'accepted', label: 'Accepted' };
    case 'open': {
      if (sheet.editable) return { kind: 'enter', label: sheet.counts.rows > 0 ? 'Continue entering scores' : 'Enter scores' };
      if (!sheet.locked && waveWindow(sheet, day) === 'not-yet') return { kind: 'not-yet', label: `Wave opens on ${formatDay(sheet.opensOn)}` };
      return { kind: 'closed', label: 'Wave closed' };
    }
  }
}

/** Why a sheet cannot be edited now, for the notice above its rows; null when it can. */
export function readOnlyReason(sheet: ScoreSheet, day = today()): string | null {
  if (sheet.editable) return null;
  if (sheet.locked) return 'A locked result was computed from this sheet, so it can no longer change.';
  if (sheet.state === 'accepted') return 'The coordinator accepted this sheet, so it is read-only.';
  if (sheet.state === 'submitted') {
    const when = sheet.submittedAt ? ` on ${formatDateTime(sheet.submittedAt)}` : '';
    return `This sheet was submitted${when} and is waiting for the coordinator. It can change again only if the coordinator returns it.`;
  }
  if (waveWindow(sheet, day) === 'not-yet') return `The ${sheet.waveName} wave opens on ${formatDay(sheet.opensOn)}; scores can be entered from then.`;
  return `The ${sheet.waveName} wave closed on ${formatDay(sheet.closesOn)}. Ask the study coordinator if scores are still missing.`;
}

export function countsText(counts: ScoreSheet['counts'], mode: ScoreSheet['mode'] = 'rows'): string {
  if (mode === 'summary') return `Class summary of ${counts.rows} students`;
  if (counts.rows === 0) return 'No students entered';
  const left = counts.left ? `, ${counts.left} left the study` : '';
  return `${counts.rows} student${counts.rows === 1 ? '' : 's'}: ${counts.scored} scored${left}`;
}

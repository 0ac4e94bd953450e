import { studyPath } from '@/lib/navigation';

/** A run's results page sits under the Comparisons tab, so the tab stays marked while it is open. */
export function runPath(studyId: string, runId: string): string {
  return `${studyPath(studyId, 'comparisons')}/runs/${runId}`;
}

/** The printable study report. */
export function reportPath(studyId: string): string {
  return `${studyPath(studyId)}/report`;
}

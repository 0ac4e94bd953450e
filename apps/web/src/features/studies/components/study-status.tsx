import { studyStatuses, type Study, type StudyStatus } from '@evenhand/entities';
import { Badge } from '@/components/ui/badge';
import { studyStatusLabels } from '@/lib/study';

export function StudyStatusBadge({ status }: { status: StudyStatus }) {
  return <Badge tone={status === 'archived' ? 'muted' : 'accent'}>{studyStatusLabels[status].label}</Badge>;
}

/** The badges beside a study's title: what a reader must know before trusting its numbers. */
export function StudyBadges({ study }: { study: Study }) {
  return (
    <>
      <StudyStatusBadge status={study.status} />
      {study.planVersion !== null && <Badge tone="muted">Plan v{study.planVersion} sealed</Badge>}
      {study.drawCommittedAt && <Badge tone="muted">Draw committed</Badge>}
      {study.quasiExperimental && <Badge tone="caution">Quasi-experimental</Badge>}
    </>
  );
}

/** The study's states in order, the current one marked, as an ordered list a screen reader reads as steps. */
export function StudyStatusSteps({ status }: { status: StudyStatus }) {
  const current = studyStatuses.indexOf(status);
  return (
    <ol className="flex flex-wrap gap-x-1 gap-y-2 text-sm">
      {studyStatuses.map((s, i) => (
        <li key={s} className="flex items-center gap-1">
          <span
            aria-current={i === current ? 'step' : undefined}
            className={`rounded-full px-2.5 py-0.5 font-semibold ${
              i === current ? 'bg-accent text-white' : i < current ? 'bg-accent-soft text-accent-strong' : 'bg-sunken text-ink-muted'
            }`}
          >
            {studyStatusLabels[s].label}
            {i < current && <span className="sr-only"> (done)</span>}
            {i === current && <span className="sr-only"> (now)</span>}
          </span>
          {i < studyStatuses.length - 1 && (
            <span aria-hidden="true" className="text-ink-muted">
              →
            </span>
          )}
        </li>
      ))}
    </ol>
  );
}

import type { RosterImport } from '@evenhand/entities';
import { Alert } from '@/components/ui/alert';
import { formatCount, formatDateTime } from '@/lib/format';

interface RosterHistoryProps {
  imports: RosterImport[];
  loading: boolean;
  error: Error | null;
}

const plural = (n: number, one: string, many: string) => `${formatCount(n)} ${n === 1 ? one : many}`;

/** What each import changed, as words: only the counts that are not zero. */
function changes(i: RosterImport): string[] {
  const parts = [
    i.sitesEnrolled && `${plural(i.sitesEnrolled, 'site', 'sites')} enrolled`,
    i.classroomsCreated && `${plural(i.classroomsCreated, 'classroom', 'classrooms')} added`,
    i.classroomsUpdated && `${plural(i.classroomsUpdated, 'classroom', 'classrooms')} updated`,
    i.studentsJoined && `${plural(i.studentsJoined, 'student', 'students')} joined`,
    i.studentsRemoved && `${plural(i.studentsRemoved, 'student', 'students')} removed before the draw`,
    i.studentsLeft && `${plural(i.studentsLeft, 'student', 'students')} left (attrition)`,
    i.invitationsSent && `${plural(i.invitationsSent, 'invitation', 'invitations')} e-mailed`,
  ];
  const said = parts.filter((p): p is string => typeof p === 'string');
  return said.length ? said : ['Nothing changed'];
}

/** The study's committed OneRoster imports, newest first: when, who, and what each changed. */
export function RosterHistory({ imports, loading, error }: RosterHistoryProps) {
  if (error) return <Alert tone="error">The imports could not be loaded: {error.message}</Alert>;
  if (loading) return <p className="text-ink-muted">Loading the imports…</p>;
  if (imports.length === 0) return <p className="text-ink-muted">No OneRoster export has been imported into this study yet.</p>;
  return (
    <ol className="space-y-3">
      {imports.map((i) => (
        <li key={i.id} className="rounded-lg border border-line bg-surface p-4">
          <p className="font-medium">
            <time dateTime={i.importedAt}>{formatDateTime(i.importedAt)}</time>
            <span className="text-ink-muted"> by </span>
            <span className="break-all">{i.importedBy ?? 'a deleted account'}</span>
          </p>
          <ul className="mt-2 flex flex-wrap gap-x-4 gap-y-1 text-ink-muted">
            {changes(i).map((c) => (
              <li key={c}>{c}</li>
            ))}
          </ul>
        </li>
      ))}
    </ol>
  );
}

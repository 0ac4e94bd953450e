import type { CsvRowIssue, RosterImport, RosterPreview, RosterSelection } from '@evenhand/entities';
import { useId, useState } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { CsvRowIssuesTable, rowIssuesOf } from '@/features/sites/components/classroom-import';

interface RosterImportProps {
  onPreview: (files: File[]) => Promise<RosterPreview>;
  onImport: (files: File[], selection: RosterSelection) => Promise<RosterImport>;
  onClose: () => void;
}

type Problem = { message: string; issues?: CsvRowIssue[] };
const problemOf = (error: unknown): Problem => ({
  message: error instanceof Error ? error.message : 'The roster could not be read.',
  issues: rowIssuesOf(error) ?? undefined,
});

const plural = (n: number, one: string, many: string) => `${n.toLocaleString('en-US')} ${n === 1 ? one : many}`;

/** What changed, in words, for the success message. */
export function describeImport(r: RosterImport): string {
  const parts = [
    r.classroomsCreated && `${plural(r.classroomsCreated, 'classroom', 'classrooms')} added`,
    r.classroomsUpdated && `${plural(r.classroomsUpdated, 'classroom', 'classrooms')} updated`,
    r.studentsJoined && `${plural(r.studentsJoined, 'student', 'students')} joined`,
    r.studentsRemoved && `${plural(r.studentsRemoved, 'student', 'students')} removed`,
    r.studentsLeft && `${plural(r.studentsLeft, 'student', 'students')} left (kept as attrition)`,
    r.invitationsSent && `${plural(r.invitationsSent, 'person', 'people')} invited by e-mail`,
  ].filter(Boolean);
  return parts.length ? `The roster is imported: ${parts.join(', ')}.` : 'The roster is imported; nothing changed.';
}

/**
 * Upload a OneRoster export, see what it would enrol, choose the schools and classes that take part,
 * and import them. Student names never leave the district's files: the preview shows counts only.
 */
export function RosterImportPanel({ onPreview, onImport, onClose }: RosterImportProps) {
  const inputId = useId();
  const [files, setFiles] = useState<File[]>([]);
  const [preview, setPreview] = useState<RosterPreview | null>(null);
  const [schools, setSchools] = useState<Set<string>>(new Set());
  const [classes, setClasses] = useState<Set<string>>(new Set());
  const [principals, setPrincipals] = useState<Record<string, { name: string; email: string }>>({});
  const [busy, setBusy] = useState(false);
  const [problem, setProblem] = useState<Problem | null>(null);
  const [done, setDone] = useState<string | null>(null);

  const read = async () => {
    if (!files.length) return setProblem({ message: 'Choose the export’s zip, or its CSV files, first.' });
    setBusy(true);
    setProblem(null);
    setDone(null);
    try {
      const p = await onPreview(files);
      setPreview(p);
      setSchools(new Set(p.schools.map((s) => s.sourcedId)));
      setClasses(new Set(p.schools.flatMap((s) => s.classes.filter((c) => !c.blocked).map((c) => c.sourcedId))));
    } catch (error) {
      setPreview(null);
      setProblem(problemOf(error));
    } finally {
      setBusy(false);
    }
  };

  const commit = async () => {
    if (!preview) return;
    const chosenSchools = preview.schools.filter((s) => schools.has(s.sourcedId));
    const chosenClasses = chosenSchools.flatMap((s) => s.classes.filter((c) => classes.has(c.sourcedId) && !c.blocked).map((c) => c.sourcedId));
    if (!chosenClasses.length) return setProblem({ message: 'Choose at least one class.' });
    // A principal named here counts when both fields are filled in.
    const named = Object.fromEntries(
      chosenSchools.flatMap((s) => {
        const p = principals[s.sourcedId];
        return !s.principal && p?.name.trim() && p.email.trim() ? [[s.sourcedId, { name: p.name.trim(), email: p.email.trim() }]] : [];
      }),
    );
    setBusy(true);
    setProblem(null);
    try {
      const result = await onImport(files, { schools: chosenSchools.map((s) => s.sourcedId), classes: chosenClasses, principals: named });
      setDone(describeImport(result));
      setPreview(null);
    } catch (error) {
      setProblem(problemOf(error));
    } finally {
      setBusy(false);
    }
  };

  const toggle = (set: Set<string>, update: (s: Set<string>) => void, id: string, on: boolean) => {
    const next = new Set(set);
    if (on) next.add(id);
    else next.delete(id);
    update(next);
  };

  return (
    <div className="space-y-5">
      {!preview && (
        <>
          <p>
            Upload your student-information system’s OneRoster 1.1 export (bulk): the zip, or its <code className="font-mono">manifest.csv</code>,{' '}
            <code className="font-mono">orgs.csv</code>, <code className="font-mono">classes.csv</code>, <code className="font-mono">users.csv</code>{' '}
            and <code className="font-mono">enrollments.csv</code>. Students’ names and other personal columns are dropped while the files are read;
            each student becomes a student code. Nothing is saved until you choose the classes and import them.
          </p>
          <div className="flex flex-wrap items-end gap-3">
            <div className="flex flex-col gap-1">
              <label htmlFor={inputId} className="font-semibold">
                Roster export
              </label>
              <input
                id={inputId}
                type="file"
                multiple
                accept=".zip,.csv,application/zip,text/csv"
                onChange={(e) => setFiles(Array.from(e.target.files ?? []))}
                className="max-w-full rounded-md border border-line-strong bg-surface px-3 py-2 file:mr-3 file:rounded file:border-0 file:bg-sunken file:px-3 file:py-1 file:font-semibold"
              />
            </div>
            <Button onClick={read} busy={busy}>
              Preview the roster
            </Button>
            <Button variant="secondary" onClick={onClose}>
              Close
            </Button>
          </div>
        </>
      )}

      {preview && (
        <div className="space-y-5">
          <p>
            The export lists {plural(preview.totals.schools, 'school', 'schools')}, {plural(preview.totals.classes, 'class', 'classes')} and{' '}
            {plural(preview.totals.students, 'student', 'students')}. Choose the schools and classes that take part.
            {preview.drawCommitted && ' The draw is committed: classrooms already in the study are updated, and students who left are kept as attrition.'}
          </p>
          {preview.schools.map((school) => {
            const schoolOn = schools.has(school.sourcedId);
            return (
              <fieldset key={school.sourcedId} className="space-y-3 rounded-lg border border-line bg-surface p-4">
                <legend className="px-1 font-semibold">
                  <label className="inline-flex items-center gap-2">
                    <input
                      type="checkbox"
                      checked={schoolOn}
                      onChange={(e) => toggle(schools, setSchools, school.sourcedId, e.target.checked)}
                      className="size-4"
                    />
                    {school.name}
                    {school.identifier && <span className="font-normal text-ink-muted">({school.identifier})</span>}
                  </label>
                </legend>
                <p className="text-sm text-ink-muted">
                  {school.siteId ? (school.enrolled ? 'Already in the study.' : 'A district site; it will be enrolled.') : 'New to Evenhand; it will be added and enrolled.'}{' '}
                  {school.principal
                    ? `Principal: ${school.principal.name} (${school.principal.email})${school.principalFromExport ? ', from the export' : ''}.`
                    : 'The export names no principal: name one here, or later.'}
                </p>
                {!school.principal && (
                  <div className="grid gap-3 sm:grid-cols-2">
                    {(['name', 'email'] as const).map((field) => (
                      <label key={field} className="flex flex-col gap-1 text-sm">
                        <span className="font-semibold">{field === 'name' ? 'Principal’s name' : 'Principal’s e-mail address'}</span>
                        <input
                          type={field === 'email' ? 'email' : 'text'}
                          disabled={!schoolOn}
                          value={principals[school.sourcedId]?.[field] ?? ''}
                          onChange={(e) =>
                            setPrincipals((all) => ({
                              ...all,
                              [school.sourcedId]: { ...(all[school.sourcedId] ?? { name: '', email: '' }), [field]: e.target.value },
                            }))
                          }
                          className="rounded-md border border-line-strong bg-surface px-3 py-2"
                        />
                      </label>
                    ))}
                  </div>
                )}
                <div className="overflow-x-auto">
                  <table className="w-full border-collapse text-sm">
                    <caption className="sr-only">Classes at {school.name}</caption>
                    <thead>
                      <tr className="border-b border-line text-left">
                        <th scope="col" className="px-2 py-1">Class</th>
                        <th scope="col" className="px-2 py-1">Teacher</th>
                        <th scope="col" className="px-2 py-1 text-right">Students</th>
                        <th scope="col" className="px-2 py-1">Changes</th>
                      </tr>
                    </thead>
                    <tbody>
                      {school.classes.map((c) => (
                        <tr key={c.sourcedId} className="border-b border-line last:border-0 align-top">
                          <th scope="row" className="px-2 py-1 text-left font-normal">
                            <label className="inline-flex items-start gap-2">
                              <input
                                type="checkbox"
                                checked={schoolOn && !c.blocked && classes.has(c.sourcedId)}
                                disabled={!schoolOn || !!c.blocked}
                                onChange={(e) => toggle(classes, setClasses, c.sourcedId, e.target.checked)}
                                className="mt-0.5 size-4"
                              />
                              <span>
                                {c.title} <span className="text-ink-muted">· grade {c.grade}</span>
                              </span>
                            </label>
                          </th>
                          <td className="px-2 py-1">{c.teacher ? `${c.teacher.name} (${c.teacher.email})` : '—'}</td>
                          <td className="px-2 py-1 text-right tabular-nums">{c.students}</td>
                          <td className="px-2 py-1">
                            {c.blocked ?? (c.classroomId ? (c.joined || c.left ? `${c.joined} joined, ${c.left} left` : 'No change') : 'New classroom')}
                          </td>
                        </tr>
                      ))}
                    </tbody>
                  </table>
                </div>
              </fieldset>
            );
          })}
          <div className="flex flex-wrap gap-3">
            <Button onClick={commit} busy={busy}>
              Import the chosen classes
            </Button>
            <Button variant="secondary" onClick={() => setPreview(null)}>
              Choose other files
            </Button>
          </div>
        </div>
      )}

      <div aria-live="polite" className="space-y-4">
        {done && <Alert tone="success">{done}</Alert>}
        {problem && <Alert tone="error">{problem.message}</Alert>}
        {problem?.issues && <CsvRowIssuesTable issues={problem.issues} />}
      </div>
    </div>
  );
}

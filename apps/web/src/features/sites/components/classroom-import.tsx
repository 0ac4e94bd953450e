import { classroomCsvColumns, csvRowIssueSchema, type CsvRowIssue, type StudySite } from '@evenhand/entities';
import { useId, useRef, useState } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { FigureTable } from '@/components/ui/figure-table';
import { ApiError } from '@/lib/api-client';
import { downloadText, toCsv } from '@/lib/csv';

const columnMeanings: Record<string, string> = {
  site_code: 'The code of a site already enrolled in this study, e.g. ALD.',
  cohort: 'The cohort’s name; a new name adds the cohort.',
  classroom: 'The classroom’s name, unique within its site.',
  grade: 'The grade, e.g. 4.',
  expected_size: 'The number of students expected, a whole number from 1 to 200.',
  teacher_email: 'The teacher’s e-mail address; a new teacher is invited.',
  teacher_name: 'The teacher’s name.',
};

/** The rows of a refused file, when the answer carries them (`details.rows`). */
export function rowIssuesOf(error: unknown): CsvRowIssue[] | null {
  if (!(error instanceof ApiError) || typeof error.details !== 'object' || error.details === null || !('rows' in error.details)) return null;
  const rows = csvRowIssueSchema.array().safeParse(error.details.rows);
  return rows.success ? rows.data : null;
}

/** A template with the header and one example row per enrolled site, built in the browser. */
export function classroomTemplate(sites: Pick<StudySite, 'code'>[]): string {
  const examples = (sites.length ? sites : [{ code: 'SITE-CODE' }]).slice(0, 3).map((s, i) => [
    s.code,
    'Grade 4, 2026–27',
    `4${String.fromCharCode(65 + i)}`,
    '4',
    24,
    `teacher${i + 1}@example.org`,
    `Teacher ${i + 1}`,
  ]);
  return toCsv([classroomCsvColumns, ...examples]);
}

export function CsvRowIssuesTable({ issues }: { issues: CsvRowIssue[] }) {
  return (
    <FigureTable
      caption={`${issues.length} ${issues.length === 1 ? 'problem' : 'problems'} in the file`}
      columns={[
        { key: 'row', header: 'Line', numeric: true },
        { key: 'column', header: 'Column' },
        { key: 'message', header: 'Problem' },
      ]}
      rows={issues.map((issue, i) => ({
        id: `${issue.row}-${issue.column ?? ''}-${i}`,
        row: issue.row,
        column: issue.column ? <code className="font-mono">{issue.column}</code> : '—',
        message: issue.message,
      }))}
    />
  );
}

interface ClassroomImportProps {
  sites: StudySite[];
  onImport: (file: File) => Promise<{ created: number }>;
  onClose: () => void;
}

export function ClassroomImport({ sites, onImport, onClose }: ClassroomImportProps) {
  const inputId = useId();
  const input = useRef<HTMLInputElement>(null);
  const [file, setFile] = useState<File | null>(null);
  const [busy, setBusy] = useState(false);
  const [result, setResult] = useState<{ tone: 'success' | 'error'; message: string; issues?: CsvRowIssue[] } | null>(null);

  const upload = async () => {
    if (!file) {
      setResult({ tone: 'error', message: 'Choose a CSV file first.' });
      return;
    }
    setBusy(true);
    setResult(null);
    try {
      const { created } = await onImport(file);
      setResult({ tone: 'success', message: `${created} ${created === 1 ? 'classroom is' : 'classrooms are'} added; new teachers are invited by e-mail.` });
      setFile(null);
      if (input.current) input.current.value = '';
    } catch (error) {
      setResult({
        tone: 'error',
        message: error instanceof Error ? error.message : 'The file could not be imported.',
        issues: rowIssuesOf(error) ?? undefined,
      });
    } finally {
      setBusy(false);
    }
  };

  return (
    <div className="space-y-5">
      <div>
        <p>
          One classroom per line, with a header row naming these columns (in any order). Every line is checked first: if one
          has a problem, nothing is added and each problem is listed by its line number.
        </p>
        <dl className="mt-3 grid gap-x-6 gap-y-1 text-sm sm:grid-cols-[max-content_1fr]">
          {classroomCsvColumns.map((c) => (
            <div key={c} className="contents">
              <dt>
                <code className="font-mono font-semibold">{c}</code>
              </dt>
              <dd className="text-ink-muted">{columnMeanings[c]}</dd>
            </div>
          ))}
        </dl>
        <Button className="mt-3" variant="quiet" size="sm" onClick={() => downloadText('classrooms-template.csv', classroomTemplate(sites))}>
          Download a template
        </Button>
      </div>
      <div className="flex flex-wrap items-end gap-3">
        <div className="flex flex-col gap-1">
          <label htmlFor={inputId} className="font-semibold">
            CSV file
          </label>
          <input
            ref={input}
            id={inputId}
            type="file"
            accept=".csv,text/csv"
            onChange={(e) => setFile(e.target.files?.[0] ?? null)}
            className="rounded-md border border-line-strong bg-surface px-3 py-2 file:mr-3 file:rounded file:border-0 file:bg-sunken file:px-3 file:py-1 file:font-semibold"
          />
        </div>
        <Button onClick={upload} busy={busy}>
          Check and add the classrooms
        </Button>
        <Button variant="secondary" onClick={onClose}>
          Close
        </Button>
      </div>
      <div aria-live="polite" className="space-y-4">
        {result && <Alert tone={result.tone}>{result.message}</Alert>}
        {result?.issues && <CsvRowIssuesTable issues={result.issues} />}
      </div>
    </div>
  );
}

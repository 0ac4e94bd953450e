import { rowIssueSchema, type RowIssue, type ScoreRow, type ScoreSheetDetail } from '@evenhand/entities';
import { useId, useRef, useState } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { useUploadSheet } from '@/features/score-sheets/api';
import { templateCsv } from '@/features/score-sheets/grid-model';
import { ApiError } from '@/lib/api-client';
import { downloadText } from '@/lib/csv';

export const UPLOAD_LIMIT_BYTES = 10 * 1024 * 1024;
const PREVIEW_ROWS = 10;

type Stage =
  | { kind: 'choose' }
  | { kind: 'sending'; file: File; dryRun: boolean }
  | { kind: 'preview'; file: File; rows: number; preview: ScoreRow[] }
  | { kind: 'refused'; file: File; message: string; issues: RowIssue[]; total: number }
  | { kind: 'done'; file: File; rows: number };

interface CsvUploadProps {
  sheet: ScoreSheetDetail;
  /** Whether the sheet has rows the upload would replace (saved, or typed in the grid). */
  hasRows: boolean;
  /** Called before the upload writes, so no draft save crosses it. */
  beforeReplace?: () => Promise<void>;
  /** The upload replaced the rows; the sheet is read again. */
  onReplaced?: () => Promise<void> | void;
  /** The upload did not write after all. */
  onReplaceFailed?: () => void;
}

function rowIssuesOf(error: ApiError): { issues: RowIssue[]; total: number } {
  const details = error.details as { rows?: unknown; total?: unknown } | undefined;
  const parsed = rowIssueSchema.array().safeParse(details?.rows);
  const issues = parsed.success ? parsed.data : [];
  return { issues, total: typeof details?.total === 'number' ? details.total : issues.length };
}

function fileName(sheet: ScoreSheetDetail): string {
  return `${sheet.classroomName} ${sheet.waveName} ${sheet.measureName}`.replace(/[^A-Za-z0-9]+/g, '-').replace(/^-|-$/g, '').toLowerCase() + '.csv';
}

const sizeText = (bytes: number) => (bytes < 1024 * 1024 ? `${Math.max(1, Math.round(bytes / 1024))} KB` : `${(bytes / 1024 / 1024).toFixed(1)} MB`);

/**
 * CSV entry: the file is checked on the server first (a dry run that writes nothing), its rows or
 * its problems are shown, and only then does the person choose to replace the sheet with it.
 */
export function CsvUpload({ sheet, hasRows, beforeReplace, onReplaced, onReplaceFailed }: CsvUploadProps) {
  const inputId = useId();
  const hintId = useId();
  const headingId = useId();
  const inputRef = useRef<HTMLInputElement>(null);
  const abort = useRef<AbortController | null>(null);
  const [stage, setStage] = useState<Stage>({ kind: 'choose' });
  const [progress, setProgress] = useState(0);
  const [confirming, setConfirming] = useState(false);
  const upload = useUploadSheet(sheet.id);

  async function send(file: File, dryRun: boolean, replace: boolean) {
    abort.current = new AbortController();
    setProgress(0);
    setStage({ kind: 'sending', file, dryRun });
    try {
      if (!dryRun) await beforeReplace?.();
      const result = await upload.mutateAsync({ file, dryRun, replace, onProgress: setProgress, signal: abort.current.signal });
      if (result.dryRun) {
        setStage({ kind: 'preview', file, rows: result.rows, preview: result.preview });
      } else {
        await onReplaced?.();
        setStage({ kind: 'done', file, rows: result.rows });
      }
    } catch (error) {
      if (!dryRun) onReplaceFailed?.();
      if (error instanceof DOMException && error.name === 'AbortError') {
        setStage({ kind: 'choose' });
        return;
      }
      if (error instanceof ApiError && error.status === 409 && (error.details as { needsConfirmation?: boolean })?.needsConfirmation) {
        // The sheet gained rows since the check: ask before replacing them.
        setStage({ kind: 'preview', file, rows: 0, preview: [] });
        setConfirming(true);
        return;
      }
      const message = error instanceof Error ? error.message : 'The file could not be sent.';
      const rows = error instanceof ApiError ? rowIssuesOf(error) : { issues: [], total: 0 };
      setStage({ kind: 'refused', file, message, ...rows });
    }
  }

  function onFileChosen(file: File | undefined) {
    if (!file) return;
    if (file.size > UPLOAD_LIMIT_BYTES) {
      setStage({ kind: 'refused', file, message: `The file is ${sizeText(file.size)}, larger than the 10 MB limit. Split it, or remove columns the sheet does not need.`, issues: [], total: 0 });
      return;
    }
    void send(file, true, false);
  }

  function startAgain() {
    setStage({ kind: 'choose' });
    setConfirming(false);
    if (inputRef.current) inputRef.current.value = '';
    inputRef.current?.focus();
  }

  return (
    <section aria-labelledby={headingId} className="space-y-4 rounded-lg border border-line bg-surface p-6">
      <h2 id={headingId} className="text-xl font-semibold">
        Upload a CSV file instead
      </h2>
      <div id={hintId} className="max-w-prose space-y-2 text-ink-muted">
        <p>
          The file needs a header row with the columns <code>student_code</code> and <code>score</code>, and may add{' '}
          <code>left</code> (yes or no) and <code>note</code>. Save it as CSV in UTF-8 (with or without a byte-order mark), with
          commas or semicolons between values; Windows or Unix line endings both work. Up to 10 MB.
        </p>
        <p>The file is checked first and nothing changes until you confirm. Every row of the sheet is then replaced by the file's rows.</p>
      </div>
      <div className="flex flex-wrap items-end gap-4">
        <div className="flex flex-col gap-1">
          <label htmlFor={inputId} className="font-semibold">
            CSV file
          </label>
          <input
            ref={inputRef}
            id={inputId}
            type="file"
            accept=".csv,text/csv"
            aria-describedby={hintId}
            disabled={stage.kind === 'sending'}
            onChange={(e) => onFileChosen(e.target.files?.[0])}
            className="rounded-md border border-line-strong bg-surface px-3 py-2 file:mr-3 file:rounded file:border-0 file:bg-sunken file:px-3 file:py-1 file:font-semibold"
          />
        </div>
        <Button variant="quiet" onClick={() => downloadText(fileName(sheet), templateCsv(sheet.rows))}>
          Download a CSV template{sheet.rows.length ? ' with this sheet’s rows' : ''}
        </Button>
      </div>

      <div aria-live="polite">
        {stage.kind === 'sending' && (
          <div className="space-y-2">
            <p>
              {stage.dryRun ? 'Checking' : 'Writing'} {stage.file.name} ({sizeText(stage.file.size)})…
            </p>
            <div className="flex items-center gap-4">
              <progress
                max={1}
                value={progress}
                aria-label={`Sending ${stage.file.name}`}
                className="h-3 w-full max-w-md overflow-hidden rounded-full [&::-moz-progress-bar]:bg-accent [&::-webkit-progress-bar]:bg-sunken [&::-webkit-progress-value]:bg-accent"
              />
              <span className="tabular-nums">{Math.round(progress * 100)}%</span>
              <Button variant="secondary" size="sm" onClick={() => abort.current?.abort()}>
                Cancel
              </Button>
            </div>
            {progress >= 1 && <p className="text-sm text-ink-muted">Sent; the server is reading the rows.</p>}
          </div>
        )}

        {stage.kind === 'preview' && stage.rows > 0 && (
          <UploadPreview stage={stage} hasRows={hasRows} onReplace={() => (hasRows ? setConfirming(true) : void send(stage.file, false, false))} onCancel={startAgain} />
        )}

        {stage.kind === 'refused' && (
          <UploadProblems stage={stage} onCancel={startAgain} />
        )}

        {stage.kind === 'done' && (
          <Alert tone="success" title="The sheet now holds the file's rows">
            <p>
              {stage.rows} row{stage.rows === 1 ? '' : 's'} from {stage.file.name} replaced what was on the sheet. Check them in the
              grid above, then submit the sheet when it is complete.
            </p>
          </Alert>
        )}
      </div>

      <Dialog
        open={confirming}
        title="Replace the rows on this sheet?"
        description={
          <p>
            The sheet already has rows. They will be replaced by the {stage.kind === 'preview' && stage.rows > 0 ? `${stage.rows} ` : ''}
            rows of {stage.kind === 'preview' ? stage.file.name : 'the file'}. Changes are recorded in the audit trail.
          </p>
        }
        onClose={() => setConfirming(false)}
      >
        <div className="flex flex-wrap gap-3">
          <Button
            onClick={() => {
              setConfirming(false);
              if (stage.kind === 'preview') void send(stage.file, false, true);
            }}
          >
            Replace the rows
          </Button>
          <Button variant="secondary" onClick={() => setConfirming(false)}>
            Keep the sheet as it is
          </Button>
        </div>
      </Dialog>
    </section>
  );
}

function UploadPreview({
  stage,
  hasRows,
  onReplace,
  onCancel,
}: {
  stage: Extract<Stage, { kind: 'preview' }>;
  hasRows: boolean;
  onReplace: () => void;
  onCancel: () => void;
}) {
  const shown = stage.preview.slice(0, PREVIEW_ROWS);
  return (
    <div className="space-y-4">
      <Alert tone="success" title={`${stage.file.name} is ready: ${stage.rows} row${stage.rows === 1 ? '' : 's'}, no problems found`}>
        <p>Nothing has changed yet. {shown.length < stage.rows ? `The first ${shown.length} rows:` : 'The rows:'}</p>
      </Alert>
      <div className="relative overflow-x-auto rounded-lg border border-line">
        <table className="w-full border-collapse text-left">
          <caption className="sr-only">
            The first rows of {stage.file.name}
          </caption>
          <thead className="bg-sunken text-sm">
            <tr>
              <th scope="col" className="px-3 py-2">Student code</th>
              <th scope="col" className="px-3 py-2">Score</th>
              <th scope="col" className="px-3 py-2">Left the study</th>
              <th scope="col" className="px-3 py-2">Note</th>
            </tr>
          </thead>
          <tbody>
            {shown.map((r) => (
              <tr key={r.studentCode} className="border-t border-line">
                <td className="px-3 py-1.5">{r.studentCode}</td>
                <td className="px-3 py-1.5 tabular-nums">{r.score ?? '—'}</td>
                <td className="px-3 py-1.5">{r.left ? 'Yes' : 'No'}</td>
                <td className="px-3 py-1.5">{r.note}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {shown.length < stage.rows && <p className="text-ink-muted">…and {stage.rows - shown.length} more.</p>}
      <div className="flex flex-wrap gap-3">
        <Button onClick={onReplace}>{hasRows ? `Replace the sheet with these ${stage.rows} rows` : `Put these ${stage.rows} rows on the sheet`}</Button>
        <Button variant="secondary" onClick={onCancel}>
          Choose another file
        </Button>
      </div>
    </div>
  );
}

function UploadProblems({ stage, onCancel }: { stage: Extract<Stage, { kind: 'refused' }>; onCancel: () => void }) {
  return (
    <div className="space-y-4">
      <Alert tone="error" title={`${stage.file.name} was not used; the sheet has not changed`}>
        <p>{stage.message}</p>
        {stage.issues.length > 0 && <p>Fix these lines in the file, save it, and choose it again.</p>}
      </Alert>
      {stage.issues.length > 0 && (
        <>
          <div className="relative overflow-x-auto rounded-lg border border-line">
            <table className="w-full border-collapse text-left">
              <caption className="sr-only">Problems in {stage.file.name}, by line</caption>
              <thead className="bg-sunken text-sm">
                <tr>
                  <th scope="col" className="px-3 py-2">Line</th>
                  <th scope="col" className="px-3 py-2">Column</th>
                  <th scope="col" className="px-3 py-2">Problem</th>
                </tr>
              </thead>
              <tbody>
                {stage.issues.map((issue, i) => (
                  <tr key={`${issue.row}-${issue.column}-${i}`} className="border-t border-line">
                    <td className="px-3 py-1.5 tabular-nums">{issue.row}</td>
                    <td className="px-3 py-1.5">{issue.column ? <code>{issue.column}</code> : '—'}</td>
                    <td className="px-3 py-1.5">{issue.message}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          {stage.total > stage.issues.length && (
            <p className="text-ink-muted">
              Showing the first {stage.issues.length} of {stage.total} problems.
            </p>
          )}
        </>
      )}
      <Button variant="secondary" onClick={onCancel}>
        Choose another file
      </Button>
    </div>
  );
}

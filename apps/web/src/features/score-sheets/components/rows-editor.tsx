import type { ScoreSheetDetail } from '@evenhand/entities';
import { useQueryClient } from '@tanstack/react-query';
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { useBlocker } from 'react-router-dom';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { Spinner } from '@/components/ui/spinner';
import { sheetQueryOptions, useSaveRows } from '@/features/score-sheets/api';
import { CsvUpload } from '@/features/score-sheets/components/csv-upload';
import { ScoreGrid, type RowsUpdate } from '@/features/score-sheets/components/score-grid';
import { SubmitSheet } from '@/features/score-sheets/components/submit-sheet';
import {
  checkGrid,
  describeIssues,
  rowsWithoutScore,
  issuesFromServer,
  isBlank,
  rowsFromSheet,
  toScoreRows,
  type CellIssues,
  type GridRow,
} from '@/features/score-sheets/grid-model';
import { useAutosave, type SaveStatus } from '@/features/score-sheets/use-autosave';
import { ApiError } from '@/lib/api-client';
import { formatDateTime, formatTime } from '@/lib/format';

interface RowsEditorProps {
  sheet: ScoreSheetDetail;
  /** Rows to start from instead of the sheet's (none: the sheet's own). */
  initialRows?: GridRow[];
  /** Save delay after the last keystroke, in ms. */
  saveDelay?: number;
}

function merge(client: Map<string, CellIssues>, server: Map<string, CellIssues>, hidden: string | null): Map<string, CellIssues> {
  const out = new Map<string, CellIssues>();
  for (const [id, cell] of server) out.set(id, { ...cell });
  for (const [id, cell] of client) {
    if (id === hidden) continue;
    out.set(id, { ...out.get(id), ...cell });
  }
  return out;
}

/** The grid's student codes that the coordinator's reasons name, upper-cased. */
function codesIn(reasons: string | null, rows: readonly GridRow[]): Set<string> {
  if (!reasons) return new Set();
  const words = new Set(reasons.toUpperCase().split(/[^A-Z0-9._-]+/).map((w) => w.replace(/\.+$/, '')).filter(Boolean));
  return new Set(rows.map((r) => r.studentCode.trim().toUpperCase()).filter((code) => code && words.has(code)));
}

/**
 * The teacher's grid with automatic draft saving and Submit. What was typed is never replaced by
 * the server's answer: a refused save keeps the rows and puts the server's messages on their cells.
 */
export function RowsEditor({ sheet, initialRows, saveDelay }: RowsEditorProps) {
  const [rows, setRows] = useState<GridRow[]>(() => initialRows ?? rowsFromSheet(sheet.rows, sheet.scale));
  const [serverIssues, setServerIssues] = useState<Map<string, CellIssues>>(() => new Map());
  // The row being typed into: its own problems wait until the person moves on.
  const [editingRow, setEditingRow] = useState<string | null>(null);
  const [pasteNote, setPasteNote] = useState('');
  const range = useMemo(() => ({ minScore: sheet.minScore, maxScore: sheet.maxScore, scale: sheet.scale }), [sheet.minScore, sheet.maxScore, sheet.scale]);
  const clientIssues = useMemo(() => checkGrid(rows, range), [rows, range]);
  // Rows without a score save as a draft; they are flagged once the teacher tries to submit.
  const [flagMissing, setFlagMissing] = useState(false);
  const missing = useMemo(() => (flagMissing ? rowsWithoutScore(rows) : new Map<string, CellIssues>()), [flagMissing, rows]);
  const mentioned = useMemo(() => codesIn(sheet.returnReasons, rows), [sheet.returnReasons, rows]);
  const shownIssues = useMemo(() => merge(merge(missing, clientIssues, null), serverIssues, editingRow), [missing, clientIssues, serverIssues, editingRow]);

  const saveRows = useSaveRows(sheet.id);
  const queryClient = useQueryClient();

  const save = useCallback(
    async (snapshot: GridRow[]) => {
      const { rows: payload, gridIndex } = toScoreRows(snapshot, range.scale);
      try {
        await saveRows.mutateAsync({ rows: payload });
        setServerIssues(new Map());
      } catch (error) {
        if (error instanceof ApiError) setServerIssues(issuesFromServer(error.details, snapshot, gridIndex));
        throw error;
      }
    },
    [saveRows, range.scale],
  );
  const blocked = useCallback((snapshot: GridRow[]) => checkGrid(snapshot, range).size > 0, [range]);
  const autosave = useAutosave({ value: rows, enabled: sheet.editable, blocked, save, delay: saveDelay });

  const onRowsChange = useCallback((update: RowsUpdate, editedRowId?: string) => {
    setRows(update);
    if (editedRowId) {
      setEditingRow(editedRowId);
      // The server's verdict on this row no longer applies to what is being typed.
      setServerIssues((m) => {
        if (!m.has(editedRowId)) return m;
        const next = new Map(m);
        next.delete(editedRowId);
        return next;
      });
    } else {
      setEditingRow(null);
    }
  }, []);

  const onActiveRowChange = useCallback((rowId: string | null) => {
    setEditingRow((current) => (current === rowId ? current : null));
  }, []);

  const onPasted = useCallback((n: number) => setPasteNote(`Pasted ${n} row${n === 1 ? '' : 's'}.`), []);

  const dirty = autosave.dirty;
  useEffect(() => {
    const warn = (event: BeforeUnloadEvent) => {
      if (dirty()) event.preventDefault();
    };
    window.addEventListener('beforeunload', warn);
    return () => window.removeEventListener('beforeunload', warn);
  }, [dirty]);

  const blocker = useBlocker(({ currentLocation, nextLocation }) => currentLocation.pathname !== nextLocation.pathname && dirty());
  const [leaving, setLeaving] = useState(false);
  const blockerRef = useRef(blocker);
  blockerRef.current = blocker;
  const flush = autosave.flush;
  // Leaving with changes still waiting: save them first, and ask only if that fails.
  useEffect(() => {
    if (blocker.state !== 'blocked') return;
    let cancelled = false;
    void flush().then((saved) => {
      if (cancelled || blockerRef.current.state !== 'blocked') return;
      if (saved) blockerRef.current.proceed();
      else setLeaving(true);
    });
    return () => {
      cancelled = true;
    };
  }, [blocker.state, flush]);

  const entered = rows.filter((r) => !isBlank(r));
  const leftCount = entered.filter((r) => r.left).length;

  async function prepareSubmit(): Promise<string | null> {
    setEditingRow(null);
    if (!entered.length) return 'Enter at least one student before submitting.';
    if (!(await autosave.flush())) return 'The sheet can be submitted once every row is saved: fix the flagged cells first.';
    const waiting = rowsWithoutScore(rows).size;
    if (waiting) {
      setFlagMissing(true);
      return `${waiting} row${waiting === 1 ? ' has' : 's have'} no score yet: enter a score, or tick “left the study”, then submit.`;
    }
    return null;
  }

  async function onReplaced() {
    const fresh = await queryClient.ensureQueryData(sheetQueryOptions(sheet.id));
    const next = rowsFromSheet(fresh.rows, fresh.scale);
    autosave.reset(next);
    setRows(next);
    setServerIssues(new Map());
    setEditingRow(null);
  }

  const visibleProblem = describeIssues(rows, shownIssues);
  const onlyTyping = clientIssues.size > 0 && !visibleProblem && serverIssues.size === 0;

  return (
    <section aria-labelledby="rows-heading" className="space-y-4">
      <div className="flex flex-wrap items-baseline justify-between gap-4">
        <h2 id="rows-heading" className="text-xl font-semibold">
          Scores by student code
        </h2>
        <p className="text-ink-muted">
          {entered.length} student{entered.length === 1 ? '' : 's'}
          {leftCount > 0 && `, ${leftCount} left the study`}
        </p>
      </div>

      <ScoreGrid
        label={`Scores for ${sheet.classroomName}, ${sheet.waveName}, ${sheet.measureName}`}
        rows={rows}
        issues={shownIssues}
        range={range}
        onRowsChange={onRowsChange}
        onActiveRowChange={onActiveRowChange}
        onPasted={onPasted}
        mentioned={mentioned}
      />
      <p aria-live="polite" className="sr-only">
        {pasteNote}
      </p>

      <div className="sticky bottom-0 z-10 flex flex-wrap items-center justify-between gap-4 rounded-lg border border-line bg-sunken px-4 py-3 shadow-[0_-4px_12px_rgb(31_35_40/0.06)]">
        <SaveStatusLine
          status={autosave.status}
          problem={visibleProblem}
          waiting={onlyTyping}
          lastSaved={sheet.counts.rows > 0 ? sheet.updatedAt : null}
          onRetry={() => void autosave.flush()}
        />
        <SubmitSheet
          sheet={sheet}
          prepare={prepareSubmit}
          summary={`${entered.length} student${entered.length === 1 ? '' : 's'}${leftCount > 0 ? `, of whom ${leftCount} left the study,` : ''}`}
        />
      </div>

      <CsvUpload
        sheet={sheet}
        hasRows={entered.length > 0 || sheet.counts.rows > 0}
        beforeReplace={autosave.settle}
        onReplaced={onReplaced}
        onReplaceFailed={() => void autosave.flush()}
      />

      <Dialog
        open={leaving}
        title="Leave without saving?"
        description="Your latest changes to this sheet are not saved. If you leave now, they are lost."
        onClose={() => {
          setLeaving(false);
          if (blocker.state === 'blocked') blocker.reset();
        }}
      >
        <div className="flex flex-wrap gap-3">
          <Button
            onClick={() => {
              setLeaving(false);
              if (blocker.state === 'blocked') blocker.reset();
            }}
          >
            Stay and fix them
          </Button>
          <Button
            variant="danger"
            onClick={() => {
              setLeaving(false);
              if (blocker.state === 'blocked') blocker.proceed();
            }}
          >
            Leave without saving
          </Button>
        </div>
      </Dialog>
    </section>
  );
}

interface SaveStatusLineProps {
  status: SaveStatus;
  /** What the flagged cells say, when the page's own checks stopped the save. */
  problem: string | null;
  /** The only problems are in the row being typed. */
  waiting: boolean;
  lastSaved: string | null;
  onRetry: () => void;
}

/** The draft's state in words, announced politely as it changes. */
export function SaveStatusLine({ status, problem, waiting, lastSaved, onRetry }: SaveStatusLineProps) {
  let text: string;
  let tone: 'ok' | 'busy' | 'bad' = 'ok';
  switch (status.kind) {
    case 'idle':
      text = lastSaved ? `Saved ${formatDateTime(lastSaved)}` : 'Nothing entered yet. Scores are saved as you type.';
      break;
    case 'saving':
      text = 'Saving…';
      tone = 'busy';
      break;
    case 'saved':
      text = `Saved at ${formatTime(status.at)}`;
      break;
    case 'blocked':
      if (waiting) {
        text = 'Not saved yet: finish the row you are typing.';
        tone = 'busy';
      } else {
        text = `Not saved: ${problem ?? 'some cells need fixing'}.`;
        tone = 'bad';
      }
      break;
    case 'failed': {
      const rowsRefused = status.error instanceof ApiError && status.error.code === 'validation_failed';
      text = `Not saved: ${status.error.message}${rowsRefused ? '. The flagged cells say why.' : ''}`;
      tone = 'bad';
      break;
    }
  }
  return (
    <div className="flex flex-wrap items-center gap-3">
      <p role="status" aria-live="polite" aria-atomic="true" className={`flex items-center gap-2 font-semibold ${tone === 'bad' ? 'text-danger' : tone === 'busy' ? 'text-ink-muted' : 'text-accent-strong'}`}>
        {tone === 'busy' && <Spinner className="size-4" />}
        {tone === 'bad' && <span aria-hidden="true">⚠</span>}
        {tone === 'ok' && status.kind !== 'idle' && <span aria-hidden="true">✓</span>}
        {text}
      </p>
      {status.kind === 'failed' && (
        <Button variant="secondary" size="sm" onClick={onRetry}>
          Try again
        </Button>
      )}
    </div>
  );
}

import type { Comparison, Run } from '@evenhand/entities';
import { useState } from 'react';
import { Link } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { resultsCsv } from '@/features/comparisons/components/results/results-csv';
import { classroomsWithoutReadSheet, totalAccount } from '@/lib/accounting';
import { downloadText } from '@/lib/csv';
import { runPath } from '@/lib/results';

interface RunActionsProps {
  run: Run;
  comparison: Comparison | undefined;
  canLock: boolean;
  canDownloadBundle: boolean;
  onLock: () => Promise<unknown>;
}

/** Lock (final), the reproducibility bundle, and a CSV of the headline numbers. */
export function RunActions({ run, comparison, canLock, canDownloadBundle, onLock }: RunActionsProps) {
  const [confirming, setConfirming] = useState(false);
  const [locking, setLocking] = useState(false);
  const [lockError, setLockError] = useState<string | null>(null);
  const lockedElsewhere = comparison?.lockedRunId && comparison.lockedRunId !== run.id ? comparison.lockedRunId : null;
  const lockable = canLock && run.kind === 'confirmatory' && run.state === 'finished' && !lockedElsewhere;
  const hasBundle = run.state === 'finished' || run.state === 'locked';
  // A run reads accepted sheets only; locking does not wait for the rest, so the dialog says how many are left out.
  const accounting = run.results?.accounting;
  const allocated = accounting ? totalAccount(accounting, 'classrooms').randomised : 0;
  const withoutOutcome = accounting ? classroomsWithoutReadSheet(accounting) : 0;

  const lock = async () => {
    setLocking(true);
    setLockError(null);
    try {
      await onLock();
      setConfirming(false);
    } catch (error) {
      setLockError(error instanceof Error ? error.message : 'The run could not be locked.');
    } finally {
      setLocking(false);
    }
  };

  return (
    <div className="space-y-3 print:hidden">
      <div className="flex flex-wrap items-center gap-3">
        {lockable && <Button onClick={() => setConfirming(true)}>Lock this result</Button>}
        {canDownloadBundle && hasBundle && (
          <a
            href={`/api/runs/${run.id}/bundle`}
            download={`evenhand-run-${run.id}.json`}
            className="inline-flex items-center justify-center gap-2 rounded-md border border-line-strong bg-surface px-4 py-2 font-semibold text-ink no-underline hover:bg-sunken hover:text-ink"
          >
            Download the bundle
          </a>
        )}
        {run.results && (
          <Button variant="secondary" onClick={() => downloadText(`evenhand-results-${run.id}.csv`, resultsCsv(run, run.results!, comparison))}>
            Download results CSV
          </Button>
        )}
      </div>
      {lockedElsewhere && run.kind === 'confirmatory' && run.state === 'finished' && (
        <p className="text-sm" data-testid="reanalysis-note">
          This is a re-analysis: the comparison’s result is already locked (<Link to={runPath(run.studyId, lockedElsewhere)}>read the locked result</Link>),
          so this run stays unlocked.
        </p>
      )}
      {lockError && !confirming && <Alert tone="error">{lockError}</Alert>}

      <Dialog
        open={confirming}
        title="Lock this result?"
        description="Locking is final. It makes this run the study’s confirmatory result for this measure."
        onClose={() => setConfirming(false)}
      >
        <div className="space-y-4">
          <ul className="list-disc space-y-1 pl-5">
            <li>The run’s inputs, plan version, engine version and the SHA-256 of its data are frozen; nothing can change them afterwards.</li>
            <li>The score sheets it read are locked too: teachers can no longer correct them.</li>
            <li>Principals’ digests and school pages report locked results only, in plain language.</li>
            <li>A later re-analysis is a new run with a written reason, and it can never be locked.</li>
          </ul>
          {withoutOutcome > 0 && (
            <Alert tone="info" title="Sheets still open">
              {withoutOutcome} of {allocated} classrooms have no accepted outcome sheet in this run (never entered, not submitted, returned to the
              teacher or awaiting review). Locking does not wait for them: they stay out of this result, and the report counts them as not analysed.
            </Alert>
          )}
          {lockError && <Alert tone="error">{lockError}</Alert>}
          <div className="flex flex-wrap gap-3">
            <Button onClick={lock} busy={locking}>
              Lock this result
            </Button>
            <Button variant="secondary" onClick={() => setConfirming(false)}>
              Keep it unlocked
            </Button>
          </div>
        </div>
      </Dialog>
    </div>
  );
}

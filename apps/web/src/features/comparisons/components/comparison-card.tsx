import type { Comparison, ComparisonSchedule, QueueRun, Run } from '@evenhand/entities';
import { useState } from 'react';
import { Link } from 'react-router-dom';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { inProgress } from '@/features/comparisons/api';
import { ComparisonBadges, covariateLabels, unitOfAnalysisLabels } from '@/features/comparisons/components/comparison-badges';
import { ReanalysisForm } from '@/features/comparisons/components/reanalysis-form';
import { MonitoringScheduleForm } from '@/features/comparisons/components/monitoring-schedule-form';
import { LatestRunLine } from '@/features/comparisons/components/run-state';
import { formatDateTime } from '@/lib/format';
import { runPath } from '@/lib/results';
import { testNames } from '@/lib/result-wording';

interface ComparisonCardProps {
  studyId: string;
  comparison: Comparison;
  /** Only the research lead queues runs; reviewers read. */
  canRun: boolean;
  onQueue: (input: QueueRun) => Promise<unknown>;
  onSetSchedule: (input: ComparisonSchedule) => Promise<unknown>;
  queueError: Error | null;
  queueing: Run['kind'] | null;
}

export function ComparisonCard({ studyId, comparison: c, canRun, onQueue, onSetSchedule, queueError, queueing }: ComparisonCardProps) {
  const [reasonFor, setReasonFor] = useState<Run['kind'] | null>(null);
  const [scheduling, setScheduling] = useState(false);
  const headingId = `comparison-${c.id}`;
  const busy = inProgress(c.latestRun?.state) || queueing !== null;

  const start = (kind: Run['kind']) => {
    // A comparison with a locked result is analysed again only with a recorded reason.
    if (c.lockedRunId) setReasonFor(kind);
    else void onQueue({ kind }).catch(() => undefined);
  };

  return (
    <article aria-labelledby={headingId} className={`rounded-lg border bg-surface p-5 ${c.isPrimary ? 'border-accent/50' : 'border-line'}`}>
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div className="space-y-2">
          <ComparisonBadges comparison={c} />
          <h3 id={headingId} className="text-xl font-semibold">
            {c.label}
          </h3>
          <p className="text-sm text-ink-muted">
            {c.label !== `${c.measureName} at ${c.waveName}` && `${c.measureName} at ${c.waveName} · `}
            Compares {unitOfAnalysisLabels[c.unitOfAnalysis]} · {testNames[c.primaryTest]} ·{' '}
            {covariateLabels[c.covariate]}
          </p>
          {c.scheduleCron && (
            <p className="text-sm" data-testid="schedule">
              Automatic monitoring checks <code className="font-mono">{c.scheduleCron}</code> ({c.scheduleTimezone}) while the wave is open
              {' · '}
              {c.nextMonitoringRunAt ? `next ${formatDateTime(c.nextMonitoringRunAt)}` : c.lockedRunId ? 'none now the result is locked' : 'none left in this wave'}
            </p>
          )}
          {canRun && !c.lockedRunId && (
            <Button variant="secondary" size="sm" onClick={() => setScheduling(true)}>
              {c.scheduleCron ? 'Change automatic checks' : 'Schedule automatic checks'}
            </Button>
          )}
        </div>
        {canRun && (
          <div className="flex flex-wrap gap-2">
            <Button variant="secondary" size="sm" onClick={() => start('monitoring')} busy={queueing === 'monitoring'} disabled={busy}>
              Run a monitoring check
            </Button>
            {c.prespecified && (
              <Button size="sm" onClick={() => start('confirmatory')} busy={queueing === 'confirmatory'} disabled={busy}>
                Run confirmatory
              </Button>
            )}
          </div>
        )}
      </div>

      <div className="mt-4 space-y-2 border-t border-line pt-4">
        {c.latestRun ? (
          <LatestRunLine studyId={studyId} run={c.latestRun} />
        ) : (
          <p className="text-ink-muted">Not run yet.</p>
        )}
        {!c.lockedRunId && c.latestFinishedRunId && c.latestFinishedRunId !== c.latestRun?.id && (
          <p>
            <Link to={runPath(studyId, c.latestFinishedRunId)}>Read the latest finished results</Link>
            <span className="text-sm text-ink-muted"> — the newest run has not finished.</span>
          </p>
        )}
        {c.lockedRunId && c.lockedRunId !== c.latestRun?.id && (
          <p>
            <Link to={runPath(studyId, c.lockedRunId)}>Read the locked result</Link>
            <span className="text-sm text-ink-muted"> — the study’s confirmatory result for this measure.</span>
          </p>
        )}
        {!c.prespecified && (
          <p className="text-sm text-ink-muted">
            Exploratory: not named in the sealed plan, so it runs only as a monitoring check and is never a confirmatory result.
          </p>
        )}
        {queueError && !reasonFor && (
          <p role="alert" className="text-sm font-semibold text-danger">
            {queueError.message}
          </p>
        )}
      </div>

      <Dialog
        open={scheduling}
        title="Automatic monitoring checks"
        description={`Interim checks of “${c.label}” that run by themselves while ${c.waveName} is open.`}
        onClose={() => setScheduling(false)}
      >
        {scheduling && (
          <MonitoringScheduleForm
            comparison={c}
            onCancel={() => setScheduling(false)}
            onSave={async (input) => {
              await onSetSchedule(input);
              setScheduling(false);
            }}
          />
        )}
      </Dialog>

      <Dialog
        open={reasonFor !== null}
        title="Analyse this comparison again"
        description="This comparison already has a locked result. A re-analysis is a new run beside it: the locked result stays as it is, and the re-analysis can never be locked."
        onClose={() => setReasonFor(null)}
      >
        {reasonFor && (
          <ReanalysisForm
            kind={reasonFor}
            onCancel={() => setReasonFor(null)}
            onQueue={async (input) => {
              await onQueue(input);
              setReasonFor(null);
            }}
          />
        )}
      </Dialog>
    </article>
  );
}

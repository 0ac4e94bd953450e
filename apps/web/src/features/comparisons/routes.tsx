import type { Comparison, Run } from '@evenhand/entities';
import { useQuery, useSuspenseQuery, type QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { Link, useParams, type LoaderFunctionArgs } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { EmptyState } from '@/components/ui/empty-state';
import { Loading } from '@/components/ui/spinner';
import { useSession } from '@/features/auth/api';
import { comparisonsQueryOptions, inProgress, runQueryOptions, useCreateComparison, useLockRun, useQueueRun, useSetSchedule } from '@/features/comparisons/api';
import { AddComparisonForm } from '@/features/comparisons/components/add-comparison-form';
import { ComparisonBadges } from '@/features/comparisons/components/comparison-badges';
import { ComparisonCard } from '@/features/comparisons/components/comparison-card';
import { RunActions } from '@/features/comparisons/components/results/run-actions';
import { RunResultsView } from '@/features/comparisons/components/results/run-results';
import { RunKindBadge, runKindLabels, RunStateBadge } from '@/features/comparisons/components/run-state';
import { formatDateTime } from '@/lib/format';
import { hasRole, studyPath } from '@/lib/navigation';
import { measuresQueryOptions, wavesQueryOptions } from '@/lib/queries';
import { reportPath } from '@/lib/results';
import { useStudyId } from '@/lib/study';

export function comparisonsLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await queryClient.ensureQueryData(comparisonsQueryOptions(params.studyId!));
    return null;
  };
}

export function runLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await Promise.all([
      queryClient.ensureQueryData(runQueryOptions(params.runId!)),
      queryClient.ensureQueryData(comparisonsQueryOptions(params.studyId!)),
    ]);
    return null;
  };
}

function useIsLead(): boolean {
  return hasRole(useSession().data?.roles ?? [], 'research_lead');
}

function useCanDownloadBundle(): boolean {
  return hasRole(useSession().data?.roles ?? [], 'research_lead', 'reviewer');
}

function ComparisonList({ title, description, items, studyId, canRun }: { title: string; description: string; items: Comparison[]; studyId: string; canRun: boolean }) {
  const queue = useQueueRun(studyId);
  const schedule = useSetSchedule(studyId);
  if (items.length === 0) return null;
  const headingId = `list-${title.replace(/\W+/g, '-').toLowerCase()}`;
  return (
    <section aria-labelledby={headingId} className="space-y-4">
      <div>
        <h2 id={headingId} className="text-2xl font-semibold tracking-tight">
          {title}
        </h2>
        <p className="mt-1 max-w-prose text-ink-muted">{description}</p>
      </div>
      {items.map((c) => {
        const mine = queue.variables?.comparisonId === c.id;
        return (
          <ComparisonCard
            key={c.id}
            studyId={studyId}
            comparison={c}
            canRun={canRun}
            onQueue={(input) => queue.mutateAsync({ comparisonId: c.id, input })}
            onSetSchedule={(input) => schedule.mutateAsync({ comparisonId: c.id, input })}
            queueing={mine && queue.isPending ? queue.variables!.input.kind : null}
            queueError={mine ? queue.error : null}
          />
        );
      })}
    </section>
  );
}

function AddComparisonDialog({ studyId, open, onClose }: { studyId: string; open: boolean; onClose: () => void }) {
  const measures = useQuery({ ...measuresQueryOptions(studyId), enabled: open });
  const waves = useQuery({ ...wavesQueryOptions(studyId), enabled: open });
  const create = useCreateComparison(studyId);
  const problem = measures.error ?? waves.error;
  return (
    <Dialog
      open={open}
      title="Add an exploratory comparison"
      description="An analysis the sealed plan did not name. It is marked exploratory everywhere, runs only as a monitoring check and never counts as the study’s confirmatory result."
      onClose={onClose}
    >
      {measures.data && waves.data ? (
        <AddComparisonForm
          measures={measures.data.items}
          waves={waves.data.items.filter((w) => w.kind !== 'baseline')}
          onCancel={onClose}
          onAdd={async (input) => {
            await create.mutateAsync(input);
            onClose();
          }}
        />
      ) : problem ? (
        <p role="alert" className="text-danger">
          {problem.message}
        </p>
      ) : (
        <Loading label="Loading the study’s measures and waves…" />
      )}
    </Dialog>
  );
}

/** The study's comparisons: the sealed plan's first (primary on top), then exploratory ones, each with its latest run. */
export function ComparisonsPage() {
  const studyId = useStudyId();
  const { data } = useSuspenseQuery(comparisonsQueryOptions(studyId));
  const isLead = useIsLead();
  const [adding, setAdding] = useState(false);
  const prespecified = data.items.filter((c) => c.prespecified);
  const exploratory = data.items.filter((c) => !c.prespecified);

  return (
    <div className="space-y-10">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <p className="max-w-prose text-ink-muted">
          A <strong className="text-ink">monitoring check</strong> reads the scores submitted so far and is interim: it is never the
          study’s result. A <strong className="text-ink">confirmatory run</strong> reads accepted score sheets only, follows the sealed plan,
          and can be locked as the result.
        </p>
        <div className="flex flex-wrap items-center gap-4">
          <Link to={reportPath(studyId)}>Open the study report</Link>
          {isLead && data.items.length > 0 && (
            <Button variant="secondary" onClick={() => setAdding(true)}>
              Add an exploratory comparison
            </Button>
          )}
        </div>
      </div>

      {data.items.length === 0 ? (
        <EmptyState title="No comparisons yet">
          <p>
            The pre-specified comparisons come from the sealed plan: one for each measure at the plan’s outcome wave. Seal the plan on the
            Plan tab, and they appear here.
          </p>
        </EmptyState>
      ) : (
        <>
          <ComparisonList
            title="Pre-specified in the sealed plan"
            description="These answer the study’s registered question. The primary outcome comes first."
            items={prespecified}
            studyId={studyId}
            canRun={isLead}
          />
          <ComparisonList
            title="Exploratory"
            description="Added after the plan was sealed. They can suggest questions for a future study but do not test the registered hypothesis."
            items={exploratory}
            studyId={studyId}
            canRun={isLead}
          />
        </>
      )}
      {isLead && <AddComparisonDialog studyId={studyId} open={adding} onClose={() => setAdding(false)} />}
    </div>
  );
}

function RunFacts({ run }: { run: Run }) {
  return (
    <dl className="grid gap-x-8 gap-y-2 text-sm sm:grid-cols-2 lg:grid-cols-4">
      {run.state === 'locked' && run.lockedAt && (
        <div>
          <dt className="text-ink-muted">Locked</dt>
          <dd className="font-semibold">{formatDateTime(run.lockedAt)}</dd>
        </div>
      )}
      <div>
        <dt className="text-ink-muted">{run.finishedAt ? 'Finished' : 'Queued'}</dt>
        <dd>{formatDateTime(run.finishedAt ?? run.queuedAt)}</dd>
      </div>
      <div>
        <dt className="text-ink-muted">Plan version</dt>
        <dd>{run.planVersion ?? '—'}</dd>
      </div>
      <div>
        <dt className="text-ink-muted">Statistics engine</dt>
        <dd>{run.engineVersion ?? '—'}</dd>
      </div>
      {run.dataSha256 && (
        <div className="sm:col-span-2 lg:col-span-4">
          <dt className="text-ink-muted">SHA-256 of the data</dt>
          <dd>
            <code className="font-mono text-xs break-all" data-testid="data-sha256">
              {run.dataSha256}
            </code>
          </dd>
        </div>
      )}
      {run.reason && (
        <div className="sm:col-span-2 lg:col-span-4">
          <dt className="text-ink-muted">Why it was run again</dt>
          <dd>{run.reason}</dd>
        </div>
      )}
    </dl>
  );
}

/** One run's results: its own layout, the registered primary result first. */
export function RunResultsPage() {
  const studyId = useStudyId();
  const runId = useParams().runId!;
  const { data: run } = useSuspenseQuery(runQueryOptions(runId));
  const { data: comparisons } = useSuspenseQuery(comparisonsQueryOptions(studyId));
  const comparison = comparisons.items.find((c) => c.id === run.comparisonId);
  const lock = useLockRun(studyId);
  const isLead = useIsLead();
  const canDownloadBundle = useCanDownloadBundle();

  return (
    <div className="space-y-8">
      <header className="space-y-3">
        <p className="flex flex-wrap gap-x-6 text-sm print:hidden">
          <Link to={studyPath(studyId, 'comparisons')}>All comparisons</Link>
          <Link to={reportPath(studyId)}>The study report</Link>
        </p>
        <div className="flex flex-wrap items-center gap-2">
          {comparison && <ComparisonBadges comparison={comparison} />}
          <RunKindBadge kind={run.kind} />
          <RunStateBadge state={run.state} />
        </div>
        <h2 className="text-2xl font-semibold tracking-tight">{comparison?.label ?? run.results?.measure.name ?? 'Comparison'}</h2>
        <p className="text-ink-muted">
          {run.kind === 'confirmatory'
            ? `${runKindLabels.confirmatory}: accepted score sheets only, following plan version ${run.planVersion ?? '—'}.`
            : `${runKindLabels.monitoring}: the score sheets submitted or accepted when it ran.`}
        </p>
        <RunFacts run={run} />
      </header>

      {run.kind === 'monitoring' && (
        <div role="note" className="rounded-lg border-2 border-caution bg-caution-soft px-5 py-4" data-testid="interim-mark">
          <p className="text-xl font-semibold text-caution">Interim — not confirmatory</p>
          <p className="mt-1">
            This monitoring check reads the scores submitted so far. It can change as data arrive, cannot be locked, and must not be
            reported as the study’s result.
          </p>
        </div>
      )}

      <RunActions run={run} comparison={comparison} canLock={isLead} canDownloadBundle={canDownloadBundle} onLock={() => lock.mutateAsync(run.id)} />

      <div aria-live="polite">
        {inProgress(run.state) && (
          <Loading label={run.state === 'queued' ? 'This run is waiting for the analysis worker…' : 'Computing the comparison…'} />
        )}
      </div>
      {run.state === 'failed' && (
        <Alert tone="error" title="The run failed">
          {run.error ?? 'No reason was recorded.'}
        </Alert>
      )}
      {run.results && <RunResultsView run={run} results={run.results} comparison={comparison} />}
    </div>
  );
}

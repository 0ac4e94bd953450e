import type { Run } from '@evenhand/entities';
import { useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useRef } from 'react';
import { Link } from 'react-router-dom';
import { Badge } from '@/components/ui/badge';
import { Spinner } from '@/components/ui/spinner';
import { comparisonKeys, inProgress, runQueryOptions } from '@/features/comparisons/api';
import { formatDateTime } from '@/lib/format';
import { runPath } from '@/lib/results';

export const runKindLabels: Record<Run['kind'], string> = { monitoring: 'Monitoring check', confirmatory: 'Confirmatory run' };

export const runStateLabels: Record<Run['state'], string> = {
  queued: 'Waiting to start',
  running: 'Running',
  finished: 'Finished',
  failed: 'Failed',
  locked: 'Locked',
};

export function RunStateBadge({ state }: { state: Run['state'] }) {
  const tone = state === 'locked' || state === 'finished' ? 'accent' : state === 'failed' ? 'caution' : 'muted';
  return <Badge tone={tone}>{runStateLabels[state]}</Badge>;
}

export function RunKindBadge({ kind }: { kind: Run['kind'] }) {
  return kind === 'monitoring' ? <Badge tone="caution">Interim — not confirmatory</Badge> : <Badge tone="accent">Confirmatory</Badge>;
}

/**
 * Follows a run while it waits or runs (the run query polls itself) and refreshes the study's comparisons
 * when it ends. Announces each change to screen readers.
 */
export function useFollowedRun(studyId: string, run: Pick<Run, 'id' | 'state'>) {
  const queryClient = useQueryClient();
  const following = inProgress(run.state);
  const followed = useQuery({ ...runQueryOptions(run.id), enabled: following });
  // The list's copy is the truth once it says the run ended; until then, the polled run is newer.
  const state = following && followed.data ? followed.data.state : run.state;
  const previous = useRef(state);
  useEffect(() => {
    if (inProgress(previous.current) && !inProgress(state)) {
      void queryClient.invalidateQueries({ queryKey: comparisonKeys.list(studyId) });
    }
    previous.current = state;
  }, [state, studyId, queryClient]);
  return { state, error: followed.data?.error ?? null, pollError: followed.error };
}

/** The latest run of a comparison, as one live line: kind, state, time, and where to read it. */
export function LatestRunLine({ studyId, run }: { studyId: string; run: Omit<Run, 'results'> }) {
  const { state, error, pollError } = useFollowedRun(studyId, run);
  const when = run.finishedAt ?? run.queuedAt;
  return (
    <div aria-live="polite" className="space-y-1">
      <p className="flex flex-wrap items-center gap-x-3 gap-y-1">
        <span className="font-semibold">Latest: {runKindLabels[run.kind].toLowerCase()}</span>
        <RunStateBadge state={state} />
        {inProgress(state) ? (
          <span className="flex items-center gap-2 text-ink-muted">
            <Spinner className="size-4" /> {state === 'queued' ? 'Waiting for the analysis worker…' : 'Computing the comparison…'}
          </span>
        ) : (
          <span className="text-sm text-ink-muted">{formatDateTime(when)}</span>
        )}
        {(state === 'finished' || state === 'locked') && <Link to={runPath(studyId, run.id)}>Read the results</Link>}
      </p>
      {state === 'failed' && (
        <p className="text-sm font-semibold text-danger">The run failed: {error ?? run.error ?? 'no reason was recorded.'}</p>
      )}
      {pollError && <p className="text-sm text-danger">The run’s progress could not be read: {pollError.message}</p>}
    </div>
  );
}

import { setTimeout as sleep } from 'node:timers/promises';
import type { SessionUser } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { listComparisons } from '../runs/comparisons.js';
import { lockRun, queueRun } from '../runs/service.js';
import { demoTimeline } from './demo-timeline.js';

async function finished(deps: Deps, runId: string): Promise<string> {
  for (let i = 0; i < 300; i++) {
    const [run] = await deps.db.query(`SELECT state, error FROM runs WHERE id = $1`, [runId]);
    if (run.state === 'finished') return run.state;
    if (run.state === 'failed') throw new Error(`demo run failed: ${run.error}`);
    await sleep(100);
  }
  throw new Error('demo run did not finish; is a worker running?');
}

/**
 * One monitoring run and one locked confirmatory run per pre-specified comparison, through the job queue, after every
 * outcome sheet was accepted. `step` marks when each happens in the demo's story (see seedDemoStudies).
 */
export async function seedDemoRuns(deps: Deps, lead: SessionUser, studyId: string, step: (story: Date) => Promise<void> = async () => {}, timeline = demoTimeline(new Date())): Promise<void> {
  const [any] = await deps.db.query(`SELECT 1 FROM runs WHERE study_id = $1 LIMIT 1`, [studyId]);
  if (any) return;
  const { items } = await listComparisons(deps.db, lead, studyId);
  const primary = items.find((c) => c.isPrimary)!;
  await step(timeline.monitoringRun);
  const monitoring = await queueRun(deps, lead, primary.id, { kind: 'monitoring' });
  await finished(deps, monitoring.id);
  await step(timeline.locked);
  for (const comparison of items.filter((c) => c.prespecified)) {
    const run = await queueRun(deps, lead, comparison.id, { kind: 'confirmatory' });
    await finished(deps, run.id);
    await lockRun(deps, lead, run.id);
  }
}

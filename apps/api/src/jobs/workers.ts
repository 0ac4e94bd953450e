import type { DataSource } from 'typeorm';
import { startDigestWorkers, type DigestWorkerOptions } from '../digests/jobs.js';
import type { Logger } from '../logger.js';
import { MONITORING_TICK_CRON, runMonitoringTick } from '../runs/schedule.js';
import { executeRun } from '../runs/service.js';
import { MONITORING_TICK_QUEUE, RUN_QUEUE, type JobQueue } from './queue.js';

export interface WorkerOptions {
  /** Register the monitoring schedule's tick (every minute); tests that call the tick themselves leave it off. */
  monitoringSchedule?: boolean;
}

/** Starts the job handlers; any number of processes may run them against one database. Digests need a mailer. */
export async function startWorkers(
  queue: JobQueue,
  db: DataSource,
  logger: Logger,
  pollingIntervalSeconds = 2,
  digests?: DigestWorkerOptions,
  options: WorkerOptions = {},
): Promise<void> {
  await queue.boss.work<{ runId: string }>(RUN_QUEUE, { batchSize: 1, pollingIntervalSeconds }, async ([job]) => {
    await executeRun(db, logger, job.data.runId);
  });
  await queue.boss.work(MONITORING_TICK_QUEUE, { batchSize: 1, pollingIntervalSeconds }, async () => {
    const done = await runMonitoringTick({ db, jobs: queue, logger });
    if (done.queued) logger.info(done, 'monitoring schedule tick');
  });
  if (options.monitoringSchedule ?? true) await queue.boss.schedule(MONITORING_TICK_QUEUE, MONITORING_TICK_CRON, {}, { tz: 'UTC' });
  if (digests) await startDigestWorkers(queue, db, logger, pollingIntervalSeconds, digests);
}

import type { DataSource } from 'typeorm';
import { startDigestWorkers, type DigestWorkerOptions } from '../digests/jobs.js';
import type { Logger } from '../logger.js';
import { executeRun } from '../runs/service.js';
import { RUN_QUEUE, type JobQueue } from './queue.js';

/** Starts the job handlers; any number of processes may run them against one database. Digests need a mailer. */
export async function startWorkers(queue: JobQueue, db: DataSource, logger: Logger, pollingIntervalSeconds = 2, digests?: DigestWorkerOptions): Promise<void> {
  await queue.boss.work<{ runId: string }>(RUN_QUEUE, { batchSize: 1, pollingIntervalSeconds }, async ([job]) => {
    await executeRun(db, logger, job.data.runId);
  });
  if (digests) await startDigestWorkers(queue, db, logger, pollingIntervalSeconds, digests);
}

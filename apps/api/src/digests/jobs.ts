import type { DataSource } from 'typeorm';
import type { Config } from '../config.js';
import { sendPasswordReset } from '../auth/service.js';
import { DIGEST_SEND_QUEUE, DIGEST_TICK_QUEUE, PASSWORD_RESET_QUEUE, type JobQueue } from '../jobs/queue.js';
import type { Logger } from '../logger.js';
import type { Mailer } from '../mail/mailer.js';
import { runDigestTick } from './schedules.js';
import { defaultDelivery, deliverDigest, type DeliveryPolicy } from './service.js';

export interface DigestWorkerOptions {
  mailer: Mailer;
  config: Config;
  delivery?: DeliveryPolicy;
  /** Register the schedule's tick (every 15 minutes); tests call the tick themselves instead. */
  schedule?: boolean;
}

export const DIGEST_TICK_CRON = '*/15 * * * *';

/** The outbox's sender (every e-mail), password-reset requests and the digest schedule's tick; safe to run in any number of processes. */
export async function startDigestWorkers(queue: JobQueue, db: DataSource, logger: Logger, pollingIntervalSeconds: number, options: DigestWorkerOptions): Promise<void> {
  const ctx = { db, mailer: options.mailer, config: options.config, jobs: queue, logger, delivery: options.delivery ?? defaultDelivery };
  // pg-boss waits a polling interval after every fetch, so a lock's digests for many schools go out in batches.
  await queue.boss.work<{ digestId: string }>(DIGEST_SEND_QUEUE, { batchSize: 10, pollingIntervalSeconds }, async (jobs) => {
    const failed: unknown[] = [];
    for (const job of jobs) await deliverDigest(ctx, job.data.digestId).catch((err: unknown) => failed.push(err));
    // Failing the batch makes pg-boss run it again; digests already sent are skipped by their state.
    if (failed.length) throw failed[0];
  });
  await queue.boss.work<{ email: string }>(PASSWORD_RESET_QUEUE, { batchSize: 1, pollingIntervalSeconds }, async ([job]) => {
    await sendPasswordReset(ctx, job.data.email);
  });
  await queue.boss.work(DIGEST_TICK_QUEUE, { batchSize: 1, pollingIntervalSeconds: Math.max(pollingIntervalSeconds, 5) }, async () => {
    const done = await runDigestTick(ctx);
    if (done.weekly || done.requeued) logger.info(done, 'digest tick');
  });
  if (options.schedule ?? true) await queue.boss.schedule(DIGEST_TICK_QUEUE, DIGEST_TICK_CRON, {}, { tz: 'UTC' });
}

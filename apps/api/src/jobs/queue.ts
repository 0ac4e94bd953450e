import PgBoss from 'pg-boss';
import type { EntityManager } from 'typeorm';
import type { Logger } from '../logger.js';

export const RUN_QUEUE = 'comparison-run';
/** One job per delivery attempt of a digest in the outbox. */
export const DIGEST_SEND_QUEUE = 'digest-send';
/** The schedule's tick: makes the weekly digests that are due and re-queues any stuck in the outbox. */
export const DIGEST_TICK_QUEUE = 'digest-tick';
/** The schedule's tick for monitoring runs: queues each comparison's run when its own cron says it is due. */
export const MONITORING_TICK_QUEUE = 'monitoring-tick';
/** A password reset asked for: the job looks the address up and, if it has an account, writes the token and the e-mail. */
export const PASSWORD_RESET_QUEUE = 'password-reset-request';

export interface JobQueue {
  /** Enqueues a run inside the caller's transaction: the run row and its job commit together or not at all. */
  enqueueRun(manager: EntityManager, runId: string): Promise<void>;
  /** Enqueues the delivery of one digest or many (one statement) inside the caller's transaction, optionally after a delay (a retry). */
  enqueueDigest(manager: EntityManager, digestIds: string | readonly string[], afterSeconds?: number): Promise<void>;
  /** Enqueues a password-reset request: the same work whether or not the address has an account. */
  enqueuePasswordReset(email: string): Promise<void>;
  boss: PgBoss;
  stop(): Promise<void>;
}

/** pg-boss's own clock: how often it checks its schedules and moves their jobs; tests shorten both to a second. */
export interface QueueTiming {
  cronMonitorIntervalSeconds?: number;
  cronWorkerIntervalSeconds?: number;
}

/** The job queue lives in the same PostgreSQL (schema pgboss), so a queued job is as durable as the data. */
export async function startQueue(databaseUrl: string, logger: Logger, timing: QueueTiming = {}): Promise<JobQueue> {
  const boss = new PgBoss({ connectionString: databaseUrl, schema: 'pgboss', max: 4, application_name: 'evenhand-jobs', ...timing });
  boss.on('error', (err) => logger.error({ err }, 'job queue error'));
  await boss.start();
  // Installed by the migration role (installQueue); here each is already there, so nothing is created.
  await createQueues(boss);
  const inTransaction = (manager: EntityManager) => ({ executeSql: async (text: string, values: unknown[]) => ({ rows: await manager.query(text, values) }) });
  return {
    boss,
    async enqueueRun(manager, runId) {
      const db = { executeSql: async (text: string, values: unknown[]) => ({ rows: await manager.query(text, values) }) };
      await boss.send(RUN_QUEUE, { runId }, { db, singletonKey: runId });
    },
    async enqueueDigest(manager, digestIds, afterSeconds) {
      const ids = typeof digestIds === 'string' ? [digestIds] : digestIds;
      if (!ids.length) return;
      const jobs = ids.map((digestId) => ({ name: DIGEST_SEND_QUEUE, data: { digestId }, singletonKey: digestId, ...(afterSeconds ? { startAfter: `${afterSeconds} seconds` } : {}) }));
      await boss.insert(jobs, { db: inTransaction(manager) });
    },
    async enqueuePasswordReset(email) {
      await boss.send(PASSWORD_RESET_QUEUE, { email });
    },
    stop: () => boss.stop({ graceful: true, timeout: 10_000 }),
  };
}

/** Each queue is a table partition pg-boss creates, so only the schema's owner can create it. */
async function createQueues(boss: PgBoss): Promise<void> {
  await boss.createQueue(RUN_QUEUE, { name: RUN_QUEUE, retryLimit: 2, retryDelay: 5, retryBackoff: true, expireInMinutes: 30 });
  // SMTP failures are retried by the digest service itself; these retries only cover a worker that died mid-job.
  await boss.createQueue(DIGEST_SEND_QUEUE, { name: DIGEST_SEND_QUEUE, retryLimit: 5, retryDelay: 30, retryBackoff: true, expireInMinutes: 5 });
  await boss.createQueue(DIGEST_TICK_QUEUE, { name: DIGEST_TICK_QUEUE, retryLimit: 1, expireInMinutes: 10 });
  // A missed tick is made up by the next one (the slot stays due for a while), so no retries.
  await boss.createQueue(MONITORING_TICK_QUEUE, { name: MONITORING_TICK_QUEUE, retryLimit: 0, expireInMinutes: 5 });
  await boss.createQueue(PASSWORD_RESET_QUEUE, { name: PASSWORD_RESET_QUEUE, retryLimit: 3, retryDelay: 10, retryBackoff: true, expireInMinutes: 5 });
}

/** Installs or upgrades the queue's schema (pgboss) and its queues as the migration role, which owns them. */
export async function installQueue(ownerUrl: string): Promise<void> {
  const boss = new PgBoss({ connectionString: ownerUrl, schema: 'pgboss', max: 2, application_name: 'evenhand-migrate', supervise: false, schedule: false });
  await boss.start();
  await createQueues(boss);
  // pg-boss's own queue for cron schedules, which its clock would otherwise create on the application's first start.
  await boss.createQueue('__pgboss__send-it');
  await boss.stop({ graceful: false, wait: true });
}

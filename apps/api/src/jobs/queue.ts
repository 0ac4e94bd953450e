import PgBoss from 'pg-boss';
import type { EntityManager } from 'typeorm';
import type { Logger } from '../logger.js';

export const RUN_QUEUE = 'comparison-run';

export interface JobQueue {
  /** Enqueues a run inside the caller's transaction: the run row and its job commit together or not at all. */
  enqueueRun(manager: EntityManager, runId: string): Promise<void>;
  boss: PgBoss;
  stop(): Promise<void>;
}

/** The job queue lives in the same PostgreSQL (schema pgboss), so a queued job is as durable as the data. */
export async function startQueue(databaseUrl: string, logger: Logger): Promise<JobQueue> {
  const boss = new PgBoss({ connectionString: databaseUrl, schema: 'pgboss', max: 4, application_name: 'evenhand-jobs' });
  boss.on('error', (err) => logger.error({ err }, 'job queue error'));
  await boss.start();
  await boss.createQueue(RUN_QUEUE, { name: RUN_QUEUE, retryLimit: 2, retryDelay: 5, retryBackoff: true, expireInMinutes: 30 });
  return {
    boss,
    async enqueueRun(manager, runId) {
      const db = { executeSql: async (text: string, values: unknown[]) => ({ rows: await manager.query(text, values) }) };
      await boss.send(RUN_QUEUE, { runId }, { db, singletonKey: runId });
    },
    stop: () => boss.stop({ graceful: true, timeout: 10_000 }),
  };
}

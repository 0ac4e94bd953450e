import { loadConfig } from './config.js';
import { createDataSource } from './db/data-source.js';
import { startQueue } from './jobs/queue.js';
import { startWorkers } from './jobs/workers.js';
import { createLogger } from './logger.js';
import { createMailer } from './mail/mailer.js';

// A worker process: job handlers only, no HTTP. Start as many as the load needs.
const config = loadConfig();
const logger = createLogger(config);
const db = createDataSource(config.databaseUrl);
await db.initialize();
const jobs = await startQueue(config.databaseUrl, logger);
const mailer = createMailer(config);
await startWorkers(jobs, db, logger, undefined, { mailer, config });
logger.info('Evenhand worker started');

const stop = async () => {
  await jobs.stop().catch(() => undefined);
  mailer.close();
  await db.destroy().catch(() => undefined);
  process.exit(0);
};
process.on('SIGTERM', () => void stop());
process.on('SIGINT', () => void stop());

import { setTimeout as sleep } from 'node:timers/promises';
import { createApp } from './app.js';
import { loadConfig } from './config.js';
import { createDataSource } from './db/data-source.js';
import { startQueue } from './jobs/queue.js';
import { startWorkers } from './jobs/workers.js';
import { createLogger } from './logger.js';
import { createMailer } from './mail/mailer.js';

const config = loadConfig();
const logger = createLogger(config);
const db = createDataSource(config.databaseUrl);
const mailer = createMailer(config);

// The database may still be starting; keep trying rather than exit.
for (let attempt = 1; !db.isInitialized; attempt++) {
  try {
    await db.initialize();
  } catch (err) {
    logger.warn({ err: (err as Error).message, attempt }, 'database not reachable yet; retrying');
    await sleep(Math.min(5000, 250 * attempt));
  }
}

const jobs = await startQueue(config.databaseUrl, logger);
if (config.workersInProcess) await startWorkers(jobs, db, logger, undefined, { mailer, config });
const app = createApp({ config, db, mailer, logger, jobs });
const server = app.listen(config.port, config.host, () => {
  logger.info(`Evenhand is listening on http://${config.host}:${config.port}`);
});

let stopping = false;
async function shutdown(signal: string) {
  if (stopping) return;
  stopping = true;
  logger.info({ signal }, 'shutting down');
  server.close();
  server.closeIdleConnections();
  mailer.close();
  await jobs.stop().catch(() => undefined);
  await db.destroy().catch(() => undefined);
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));

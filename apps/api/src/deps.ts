import type { DataSource } from 'typeorm';
import type { Config } from './config.js';
import type { JobQueue } from './jobs/queue.js';
import type { Logger } from './logger.js';
import type { Mailer } from './mail/mailer.js';

/** What the app is built from; tests pass their own database and settings. */
export interface Deps {
  config: Config;
  db: DataSource;
  mailer: Mailer;
  logger: Logger;
  jobs: JobQueue;
}

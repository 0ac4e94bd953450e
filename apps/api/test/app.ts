import { randomBytes } from 'node:crypto';
import type { Express } from 'express';
import request from 'supertest';
import type { DataSource } from 'typeorm';
import { createApp } from '../src/app.js';
import { loadConfig, type Config } from '../src/config.js';
import { createDataSource } from '../src/db/data-source.js';
import { createLogger } from '../src/logger.js';
import { startQueue, type JobQueue } from '../src/jobs/queue.js';
import { startWorkers } from '../src/jobs/workers.js';
import { startDigestWorkers } from '../src/digests/jobs.js';
import { createMailer } from '../src/mail/mailer.js';
import { DEMO_PASSWORD } from '../src/seed/demo.js';
import { inject } from 'vitest';
import { appUrlForDatabase, withAdminClient } from './database.js';

export interface TestApp {
  app: Express;
  db: DataSource;
  config: Config;
  databaseUrl: string;
  jobs: JobQueue;
  /** Another app on the same database, with its own in-memory state (rate-limit counters). */
  freshApp(): Express;
  close(): Promise<void>;
}

export function testConfig(databaseUrl: string, overrides: Record<string, string> = {}): Config {
  return loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: databaseUrl,
    SMTP_PORT: process.env.SMTP_PORT ?? '1025',
    LOG_LEVEL: process.env.TEST_LOG_LEVEL ?? 'silent',
    APP_URL: 'http://127.0.0.1:3999',
    ...overrides,
  });
}

/**
 * A fresh database cloned from the template and the real app on top of it. `workers` starts the run workers too; the
 * outbox's sender (every e-mail goes through it) runs unless `mail: false` (tests that start their own sender).
 */
export async function startTestApp(overrides: { databaseUrl?: string; workers?: boolean; mail?: boolean } = {}): Promise<TestApp> {
  const name = `evenhand_t_${randomBytes(6).toString('hex')}`;
  await withAdminClient((c) => c.query(`CREATE DATABASE ${name} TEMPLATE ${inject('templateDb')}`));
  const databaseUrl = overrides.databaseUrl ?? appUrlForDatabase(name);
  const config = testConfig(databaseUrl);
  const db = createDataSource(databaseUrl);
  await db.initialize();
  const mailer = createMailer(config);
  const logger = createLogger(config);
  const jobs = await startQueue(databaseUrl, logger);
  if (overrides.workers) await startWorkers(jobs, db, logger, 0.5);
  if (overrides.mail ?? true) await startDigestWorkers(jobs, db, logger, 0.5, { mailer, config, schedule: false });
  const deps = { config, db, mailer, logger, jobs };
  return {
    jobs,
    app: createApp(deps),
    freshApp: () => createApp(deps),
    db,
    config,
    databaseUrl: appUrlForDatabase(name),
    async close() {
      mailer.close();
      await jobs.stop();
      await db.destroy();
      await withAdminClient((c) => c.query(`DROP DATABASE ${name} WITH (FORCE)`));
    },
  };
}

export interface SignedIn {
  agent: ReturnType<typeof request.agent>;
  csrf: string;
  token: string;
  userId: string;
}

function cookieValue(setCookie: string[] | string | undefined, name: string): string {
  const all = Array.isArray(setCookie) ? setCookie : setCookie ? [setCookie] : [];
  const found = all.find((c) => c.startsWith(`${name}=`));
  if (!found) throw new Error(`no ${name} cookie was set`);
  return decodeURIComponent(found.split(';')[0].slice(name.length + 1));
}

/** Signs in through the real route; the agent keeps the cookies, `csrf` is the header value to echo. */
export async function signIn(app: Express, email: string, password = DEMO_PASSWORD): Promise<SignedIn> {
  const agent = request.agent(app);
  const res = await agent.post('/api/auth/login').send({ email, password });
  if (res.status !== 200) throw new Error(`sign-in as ${email} answered ${res.status}: ${JSON.stringify(res.body)}`);
  return { agent, csrf: cookieValue(res.headers['set-cookie'], 'evenhand_csrf'), token: res.body.token, userId: res.body.user.id };
}

export { cookieValue };

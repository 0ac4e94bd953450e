import { createDataSource } from '../src/db/data-source.js';
import { startQueue } from '../src/jobs/queue.js';
import { createLogger } from '../src/logger.js';
import { seedDemo } from '../src/seed/demo.js';
import type { TestProject } from 'vitest/node';
import { urlForDatabase, withAdminClient } from './database.js';

/** Builds the template every test file clones: all migrations applied, demo accounts seeded. */
export default async function setup(project: TestProject) {
  // One template per test run, so two runs on the same cluster do not drop each other's.
  const TEMPLATE_DB = `evenhand_template_${process.pid}`;
  project.provide('templateDb', TEMPLATE_DB);
  await withAdminClient(async (client) => {
    await client.query(`DROP DATABASE IF EXISTS ${TEMPLATE_DB} WITH (FORCE)`);
    await client.query(`CREATE DATABASE ${TEMPLATE_DB}`);
  });
  const db = createDataSource(urlForDatabase(TEMPLATE_DB));
  await db.initialize();
  await db.runMigrations({ transaction: 'each' });
  await db.transaction((manager) => seedDemo(manager));
  await db.destroy();
  // Install the job queue's schema once, so every cloned database already has it.
  const queue = await startQueue(urlForDatabase(TEMPLATE_DB), createLogger({ logLevel: 'silent' }));
  await queue.stop();
  return () => withAdminClient((client) => client.query(`DROP DATABASE IF EXISTS ${TEMPLATE_DB} WITH (FORCE)`));
}

declare module 'vitest' {
  export interface ProvidedContext {
    templateDb: string;
  }
}

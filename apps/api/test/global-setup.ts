import { createDataSource } from '../src/db/data-source.js';
import { grantToApplication } from '../src/db/roles.js';
import { installQueue } from '../src/jobs/queue.js';
import { seedDemo } from '../src/seed/demo.js';
import type { TestProject } from 'vitest/node';
import { APP_ROLE, appUrlForDatabase, ensureAppRole, urlForDatabase, withAdminClient } from './database.js';

/** Builds the template every test file clones: all migrations applied, demo accounts seeded. */
export default async function setup(project: TestProject) {
  // One template per test run, so two runs on the same cluster do not drop each other's.
  const TEMPLATE_DB = `evenhand_template_${process.pid}`;
  project.provide('templateDb', TEMPLATE_DB);
  await withAdminClient(async (client) => {
    await ensureAppRole(client);
    await client.query(`DROP DATABASE IF EXISTS ${TEMPLATE_DB} WITH (FORCE)`);
    await client.query(`CREATE DATABASE ${TEMPLATE_DB}`);
  });
  const db = createDataSource(urlForDatabase(TEMPLATE_DB));
  await db.initialize();
  await db.runMigrations({ transaction: 'each' });
  // As `npm run migrate` does: the admin owns the schema and the job queue's; the apps run as a role that owns nothing.
  await installQueue(urlForDatabase(TEMPLATE_DB));
  await grantToApplication((sql) => db.query(sql), APP_ROLE);
  await db.destroy();
  const app = createDataSource(appUrlForDatabase(TEMPLATE_DB));
  await app.initialize();
  await app.transaction((manager) => seedDemo(manager));
  await app.destroy();
  return () => withAdminClient((client) => client.query(`DROP DATABASE IF EXISTS ${TEMPLATE_DB} WITH (FORCE)`));
}

declare module 'vitest' {
  export interface ProvidedContext {
    templateDb: string;
  }
}

import { loadConfig } from '../config.js';
import { installQueue } from '../jobs/queue.js';
import { createDataSource } from './data-source.js';
import { grantToApplication, roleOf } from './roles.js';

// As the role that owns the schema; the application's own role (DATABASE_URL) only receives row access.
const config = loadConfig();
const db = createDataSource(config.migrationDatabaseUrl);
await db.initialize();
const applied = await db.runMigrations({ transaction: 'each' });
console.log(applied.length ? `Applied migrations: ${applied.map((m) => m.name).join(', ')}` : 'Database schema is up to date');
await installQueue(config.migrationDatabaseUrl);
const appRole = roleOf(config.databaseUrl);
if (appRole !== roleOf(config.migrationDatabaseUrl)) {
  await grantToApplication((sql) => db.query(sql), appRole);
  console.log(`Granted row access to ${appRole}`);
}
await db.destroy();

import { loadConfig } from '../config.js';
import { createDataSource } from '../db/data-source.js';
import { resetDatabase, seedDemo } from './demo.js';

const reset = process.argv.includes('--reset');
const config = loadConfig();
if (config.production) throw new Error('The demo seed never runs against a production database');
const db = createDataSource(config.databaseUrl);
await db.initialize();
const { created } = await db.transaction(async (manager) => {
  if (reset) await resetDatabase(manager);
  return seedDemo(manager);
});
console.log(created ? `Demo district seeded (${created} accounts added)` : 'Demo district already present');
await db.destroy();

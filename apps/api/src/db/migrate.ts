import { loadConfig } from '../config.js';
import { createDataSource } from './data-source.js';

const config = loadConfig();
const db = createDataSource(config.databaseUrl);
await db.initialize();
const applied = await db.runMigrations({ transaction: 'each' });
console.log(applied.length ? `Applied migrations: ${applied.map((m) => m.name).join(', ')}` : 'Database schema is up to date');
await db.destroy();

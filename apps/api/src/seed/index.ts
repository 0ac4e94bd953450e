import { loadConfig } from '../config.js';
import { createDataSource } from '../db/data-source.js';
import { createLogger } from '../logger.js';
import { startQueue } from '../jobs/queue.js';
import { startWorkers } from '../jobs/workers.js';
import { startDigestWorkers } from '../digests/jobs.js';
import { waitForOutbox } from '../digests/service.js';
import { createMailer } from '../mail/mailer.js';
import { resetDatabase, seedDemo } from './demo.js';
import { seedDemoStudies } from './demo-study.js';
import { placeOnTimeline } from './demo-timeline.js';

const reset = process.argv.includes('--reset');
const config = loadConfig();
if (config.production) throw new Error('The demo seed never runs against a production database');
if (reset) {
  // Emptying guarded tables takes the schema's owner (see resetDatabase); the seed itself writes as the application.
  const owner = createDataSource(config.migrationDatabaseUrl);
  await owner.initialize();
  await owner.transaction((manager) => resetDatabase(manager));
  await owner.destroy();
}
const db = createDataSource(config.databaseUrl);
await db.initialize();
const { created } = await db.transaction((manager) => seedDemo(manager));
const mailer = createMailer(config);
const logger = createLogger({ logLevel: 'warn' });
const jobs = await startQueue(config.databaseUrl, logger);
await startWorkers(jobs, db, logger, 0.5);
const studies = await seedDemoStudies({ config, db, mailer, logger, jobs });
if (studies) {
  // The services stamped the demo study with today's clock; its story happened over the past school year.
  const owner = createDataSource(config.migrationDatabaseUrl);
  await owner.initialize();
  await owner.transaction((manager) => placeOnTimeline(manager, studies));
  await owner.destroy();
}
// The outbox is sent once every demo result is locked: each principal's lock digest, rewritten while it waited, names them all.
await startDigestWorkers(jobs, db, logger, 0.5, { mailer, config, schedule: false });
// Locking the demo runs put digests for the principals in the outbox: send them before exiting.
const outbox = await waitForOutbox(db, 60_000);
if (outbox.sent) console.log(`Digests sent: ${outbox.sent} (see the mail catcher)`);
if (outbox.queued || outbox.retrying) {
  console.warn(
    `${outbox.queued + outbox.retrying} digest(s) could not be sent yet (${outbox.lastError ?? 'no answer in time'}). Is the SMTP server ` +
      `(maildev) running on ${config.smtp.host}:${config.smtp.port}? They stay in the outbox; the API's workers retry them.`,
  );
}
await jobs.stop();
mailer.close();
console.log(created || studies ? `Demo district seeded (${created} accounts, ${studies ? 'demo studies' : 'no new studies'})` : 'Demo district already present');
await db.destroy();

import { createServer } from 'node:net';
import { MailDev } from 'maildev';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, testConfig, type SignedIn, type TestApp } from '../../test/app.js';
import { uniqueAddress } from '../../test/mail.js';
import { startDigestWorkers } from '../digests/jobs.js';
import { createLogger } from '../logger.js';
import { createMailer, type Mailer } from './mailer.js';

// A mail catcher of this test's own, on ports nobody else uses, so it can be stopped without touching the shared one.
const freePort = () =>
  new Promise<number>((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as { port: number };
      server.close(() => resolve(port));
    });
  });

let t: TestApp;
let admin: SignedIn;
let mailer: Mailer;
let smtp: number;
let web: number;
let catcher: MailDev | null = null;

beforeAll(async () => {
  [smtp, web] = [await freePort(), await freePort()];
  t = await startTestApp({ mail: false });
  const config = testConfig(t.databaseUrl, { SMTP_PORT: String(smtp) });
  mailer = createMailer(config);
  await startDigestWorkers(t.jobs, t.db, createLogger(config), 0.5, { mailer, config, schedule: false, delivery: { maxAttempts: 20, baseDelaySeconds: 0.5, maxDelaySeconds: 1 } });
  admin = await signIn(t.app, 'admin@evenhand.test');
});
afterAll(async () => {
  mailer.close();
  await catcher?.stop();
  await t.close();
});

const caught = async (address: string) => {
  const all = (await (await fetch(`http://127.0.0.1:${web}/api/email`)).json()) as { to: { address: string }[]; subject: string }[];
  return all.filter((m) => m.to.some((x) => x.address === address));
};
const outboxRow = async (address: string) => (await t.db.query(`SELECT id, kind, state, attempts FROM digests WHERE recipient_email = $1`, [address]))[0];

describe('the outbox', () => {
  it('when the mail server is down, then an invitation waits in the outbox and, once it is up, arrives exactly once, audited', async () => {
    const email = uniqueAddress('outbox-invitee');
    const [{ id: siteId }] = await t.db.query(`SELECT id FROM sites ORDER BY code LIMIT 1`);
    const res = await admin.agent.post('/api/accounts').set('x-csrf-token', admin.csrf).send({ email, name: 'Ottilie Brambleford', roles: [{ role: 'teacher', siteId }] });
    expect(res.status).toBe(201);

    // The server is down: the first attempt fails and the message waits for its retry.
    await expect.poll(async () => (await outboxRow(email))?.state, { timeout: 15_000 }).toBe('retrying');
    expect((await outboxRow(email)).kind).toBe('invitation');

    catcher = new MailDev({ smtp, web, ip: '127.0.0.1', webIp: '127.0.0.1', silent: true });
    await catcher.start();
    await expect.poll(async () => (await outboxRow(email)).state, { timeout: 20_000 }).toBe('sent');
    const mails = await caught(email);
    expect(mails).toHaveLength(1);
    expect(mails[0].subject).toBe('You are invited to Evenhand');

    // Nothing else is on its way: no open job for the message, and it is audited (without its link).
    const row = await outboxRow(email);
    const [{ open }] = await t.db.query(`SELECT count(*)::int AS open FROM pgboss.job WHERE name = 'digest-send' AND data->>'digestId' = $1 AND state IN ('created', 'retry', 'active')`, [row.id]);
    expect(open).toBe(0);
    const audit = await t.db.query(`SELECT actor_id, after FROM audit_events WHERE action = 'mail.queued' AND entity_id = $1`, [row.id]);
    expect(audit).toEqual([{ actor_id: admin.userId, after: { kind: 'invitation', to: email, subject: 'You are invited to Evenhand' } }]);
    expect(await caught(email)).toHaveLength(1);
  });
});

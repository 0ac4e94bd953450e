import { spawn, type ChildProcess } from 'node:child_process';
import { connect } from 'node:net';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, send, type StudySetup } from '../../test/fixtures.js';
import { uniqueAddress } from '../../test/mail.js';
import { startWorkers } from '../jobs/workers.js';
import { createLogger } from '../logger.js';
import { createMailer, type Mailer } from '../mail/mailer.js';

// This file's own mail catcher, which it stops and starts; the shared one of `npm test` stays up.
const SMTP_PORT = 1225;
const WEB_PORT = 1280;
const MAILDEV = fileURLToPath(new URL('../../../../node_modules/.bin/maildev', import.meta.url));
const MAX_ATTEMPTS = 6;

let t: TestApp;
let s: StudySetup;
let mailer: Mailer;
let maildev: ChildProcess | null = null;
let principal: string;

const portOpen = (port: number) =>
  new Promise<boolean>((resolve) => {
    const socket = connect(port, '127.0.0.1');
    socket.once('connect', () => (socket.destroy(), resolve(true)));
    socket.once('error', () => resolve(false));
  });

async function startMaildev() {
  maildev = spawn(MAILDEV, ['--smtp', String(SMTP_PORT), '--web', String(WEB_PORT), '--ip', '127.0.0.1', '--web-ip', '127.0.0.1', '--silent'], { stdio: 'ignore' });
  for (let i = 0; i < 100; i++) {
    if ((await portOpen(SMTP_PORT)) && (await portOpen(WEB_PORT))) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error('this test’s maildev did not start');
}

async function stopMaildev() {
  const child = maildev;
  maildev = null;
  if (!child || child.exitCode !== null) return;
  const exited = new Promise((r) => child.once('exit', r));
  child.kill('SIGTERM');
  await exited;
}

interface Caught {
  id: string;
  subject: string;
  to: { address: string }[];
  headers: Record<string, string>;
}

async function caught(): Promise<Caught[]> {
  const res = await fetch(`http://127.0.0.1:${WEB_PORT}/api/email`);
  // The principal's invitation leaves through the same outbox; only the digest counts here.
  return ((await res.json()) as Caught[]).filter((m) => m.to.some((x) => x.address === principal) && m.subject.startsWith('Update on'));
}

async function digestState(id: string, until: (d: { state: string; attempts: number }) => boolean, timeoutMs = 25_000) {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const res = await s.coordinator.agent.get(`/api/studies/${s.studyId}/digests`);
    const d = res.body.items.find((x: { id: string }) => x.id === id);
    if (d && until(d)) return d;
    if (Date.now() > end) throw new Error(`digest ${id} is still ${JSON.stringify(d)}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

async function sendNow(): Promise<string> {
  const before: { id: string }[] = await t.db.query(`SELECT id FROM digests WHERE study_id = $1`, [s.studyId]);
  expect(await send(s.coordinator, 'post', `/api/studies/${s.studyId}/digests/send`, {}, 202)).toEqual({ queued: 1, skipped: 0 });
  const [row] = await t.db.query(`SELECT id FROM digests WHERE study_id = $1 AND NOT (id = ANY($2)) `, [s.studyId, before.map((b) => b.id)]);
  return row.id;
}

beforeAll(async () => {
  if ((await portOpen(SMTP_PORT)) || (await portOpen(WEB_PORT))) throw new Error(`ports ${SMTP_PORT}/${WEB_PORT} are taken; this test needs its own maildev`);
  t = await startTestApp({ mail: false }); // its own sender, below
  const logger = createLogger({ logLevel: 'silent' });
  mailer = createMailer({ ...t.config, smtp: { ...t.config.smtp, port: SMTP_PORT } });
  // Waits of 0.5, 1, 2, 4 and 8 seconds: about 16 seconds from the first attempt to undeliverable.
  await startWorkers(t.jobs, t.db, logger, 0.5, { mailer, config: t.config, schedule: false, delivery: { maxAttempts: MAX_ATTEMPTS, baseDelaySeconds: 0.5, maxDelaySeconds: 8 } });
  s = await createStudy(t.app);
  const { classrooms } = await enrolClassrooms(s, 1, 2);
  principal = uniqueAddress('principal');
  await send(s.coordinator, 'patch', `/api/sites/${classrooms[0].siteId}`, { principal: { email: principal, name: 'P. Outage' } }, 200);
});

afterAll(async () => {
  await stopMaildev();
  mailer?.close();
  await t?.close();
});

describe('digest delivery', () => {
  it('when the SMTP server is down, then the digest is retrying; once it is back, the digest arrives exactly once', async () => {
    const id = await sendNow();
    const retrying = await digestState(id, (d) => d.state === 'retrying');
    expect(retrying.attempts).toBeGreaterThanOrEqual(1);
    expect(retrying.lastError).toMatch(/ECONNREFUSED/);
    expect(retrying.nextAttemptAt).not.toBeNull();

    await startMaildev();
    const sent = await digestState(id, (d) => d.state === 'sent');
    expect(sent.attempts).toBeGreaterThanOrEqual(2);
    expect(sent.attempts).toBeLessThan(MAX_ATTEMPTS);
    expect(sent.sentAt).not.toBeNull();
    const mails = await caught();
    expect(mails).toHaveLength(1);
    expect(mails[0].headers['message-id']).toBe(`<digest-${id}@evenhand.test>`);
    expect(mails[0].subject).toMatch(/^Update on Paired reading in grade 4/);
    // No late retry sends it again.
    await new Promise((r) => setTimeout(r, 2500));
    expect(await caught()).toHaveLength(1);
    const [{ n }] = await t.db.query(`SELECT count(*)::int AS n FROM pgboss.job WHERE name = 'digest-send' AND data->>'digestId' = $1 AND state IN ('created', 'retry', 'active')`, [id]);
    expect(n).toBe(0);
  }, 60_000);

  it('when the SMTP server never answers, then the digest ends undeliverable after the bound and is not tried again', async () => {
    await stopMaildev();
    const id = await sendNow();
    const gone = await digestState(id, (d) => d.state === 'undeliverable', 45_000);
    expect(gone.attempts).toBe(MAX_ATTEMPTS);
    expect(gone.lastError).toMatch(/ECONNREFUSED/);
    expect(gone.nextAttemptAt).toBeNull();
    await new Promise((r) => setTimeout(r, 1500));
    const [row] = await t.db.query(`SELECT state, attempts FROM digests WHERE id = $1`, [id]);
    expect(row).toEqual({ state: 'undeliverable', attempts: MAX_ATTEMPTS });
    await expect(t.db.query(`UPDATE digests SET state = 'queued', next_attempt_at = now() WHERE id = $1`, [id])).rejects.toThrow(/undeliverable and cannot change/);
  }, 60_000);
});

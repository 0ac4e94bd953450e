import { createHmac, randomUUID, timingSafeEqual } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import {
  defaultDigestSchedule,
  type Digest,
  type DigestDetail,
  type DigestFrequency,
  type DigestKind,
  type DigestPreference,
  type DigestSchedule,
  type DigestsQuery,
  type MySchool,
  type SendDigestsResult,
  type SessionUser,
  type SiteFacts,
} from '@evenhand/entities';
import { recordAudit } from '../audit/service.js';
import type { Config } from '../config.js';
import { AppError } from '../errors.js';
import type { JobQueue } from '../jobs/queue.js';
import type { Logger } from '../logger.js';
import type { Mailer } from '../mail/mailer.js';
import { findVisibleStudy, sitesOf } from '../studies/access.js';
import { buildSiteFacts } from './facts.js';
import { renderDigest, type DigestLinks } from './templates.js';

/** What creating digests needs: links and tokens come from the config, delivery jobs from the queue. */
export interface DigestContext {
  config: Pick<Config, 'appUrl' | 'jwtSecret' | 'mailFrom'>;
  jobs: Pick<JobQueue, 'enqueueDigest'>;
}

/** How often and how patiently a digest is retried when the SMTP server refuses or cannot be reached. */
export interface DeliveryPolicy {
  /** Attempts in all, the first included; after the last one fails the digest is undeliverable. */
  maxAttempts: number;
  /** The wait before the second attempt; each later wait doubles, up to maxDelaySeconds. */
  baseDelaySeconds: number;
  maxDelaySeconds: number;
}

/** About two hours of retries: 1, 2, 4, … 60 minutes. */
export const defaultDelivery: DeliveryPolicy = { maxAttempts: 8, baseDelaySeconds: 60, maxDelaySeconds: 3600 };

export const retryDelaySeconds = (policy: DeliveryPolicy, failedAttempts: number) =>
  Math.min(policy.maxDelaySeconds, policy.baseDelaySeconds * 2 ** (failedAttempts - 1));

// Preference links: a single-purpose signature over the user id, so they work without signing in and forever.

const PREFERENCE_PURPOSE = 'evenhand-digest-preferences';

function preferenceMac(config: Pick<Config, 'jwtSecret'>, userId: string): string {
  return createHmac('sha256', config.jwtSecret).update(`${PREFERENCE_PURPOSE}:${userId}`).digest('base64url');
}

export function preferenceToken(config: Pick<Config, 'jwtSecret'>, userId: string): string {
  return `${userId}.${preferenceMac(config, userId)}`;
}

function userOfToken(config: Pick<Config, 'jwtSecret'>, token: string): string {
  const [userId, mac, extra] = token.split('.');
  const invalid = AppError.validation('This link is not valid; use the newest digest e-mail, or sign in and open My school');
  if (!userId || !mac || extra !== undefined || !/^[0-9a-f-]{36}$/.test(userId)) throw invalid;
  const expected = Buffer.from(preferenceMac(config, userId));
  const given = Buffer.from(mac);
  if (expected.length !== given.length || !timingSafeEqual(expected, given)) throw invalid;
  return userId;
}

function linksFor(config: DigestContext['config'], userId: string): DigestLinks {
  const token = encodeURIComponent(preferenceToken(config, userId));
  return {
    mySchool: `${config.appUrl}/my-school`,
    preferences: (frequency) => `${config.appUrl}/email-preferences?token=${token}${frequency ? `&frequency=${frequency}` : ''}`,
  };
}

interface Recipient {
  user_id: string;
  name: string;
  email: string;
  site_id: string;
  frequency: DigestFrequency;
}

/** Principals of the study's schools: everyone with an active principal grant for an enrolled site. */
async function recipientsOf(manager: EntityManager, studyId: string): Promise<Recipient[]> {
  return manager.query(
    `SELECT u.id AS user_id, u.name, u.email, ss.site_id, coalesce(p.frequency, 'weekly') AS frequency
       FROM study_sites ss
       JOIN sites s ON s.id = ss.site_id
       JOIN role_grants g ON g.site_id = ss.site_id AND g.role = 'principal'
       JOIN users u ON u.id = g.user_id AND u.active
       LEFT JOIN digest_preferences p ON p.user_id = u.id
      WHERE ss.study_id = $1
      ORDER BY s.name, u.email`,
    [studyId],
  );
}

const wants: Record<DigestKind, DigestFrequency[]> = { weekly: ['weekly'], lock: ['weekly', 'locked'], manual: ['weekly', 'locked'] };

/**
 * Writes one digest per principal and school into the outbox, inside the caller's transaction, and enqueues its
 * delivery in the same transaction. `key` makes it idempotent: the same event processed twice adds nothing.
 */
async function createDigests(
  manager: EntityManager,
  ctx: DigestContext,
  input: { studyId: string; kind: DigestKind; key: string; runId?: string },
): Promise<SendDigestsResult> {
  const recipients = await recipientsOf(manager, input.studyId);
  const facts = new Map<string, SiteFacts>();
  let queued = 0;
  let skipped = 0;
  for (const r of recipients) {
    if (!wants[input.kind].includes(r.frequency)) {
      skipped++;
      continue;
    }
    const key = `${input.key}:${r.site_id}:${r.user_id}`;
    const [exists] = await manager.query(`SELECT 1 FROM digests WHERE unique_key = $1`, [key]);
    if (exists) continue;
    if (!facts.has(r.site_id)) facts.set(r.site_id, await buildSiteFacts(manager, input.studyId, r.site_id));
    const siteFacts = facts.get(r.site_id)!;
    if (input.kind === 'lock') {
      // A lead often locks several comparisons in a row: while this principal's lock digest still waits in the outbox
      // (no worker holds it), it is rewritten to name every result locked since, so one e-mail tells of the event.
      const [waiting]: { id: string; locked_at: Date }[] = await manager.query(
        `SELECT d.id, r.locked_at FROM digests d JOIN runs r ON r.id = d.run_id
          WHERE d.study_id = $1 AND d.site_id = $2 AND d.recipient_id = $3 AND d.kind = 'lock' AND d.state = 'queued' AND d.attempts = 0
          ORDER BY d.created_at LIMIT 1 FOR UPDATE OF d SKIP LOCKED`,
        [input.studyId, r.site_id, r.user_id],
      );
      if (waiting) {
        const since = new Date(waiting.locked_at).getTime();
        const newly = siteFacts.results.filter((x) => x.runId === input.runId || Date.parse(x.lockedAt) >= since).map((x) => x.runId);
        const merged = await renderDigest(siteFacts, 'lock', r.name, linksFor(ctx.config, r.user_id), newly);
        await manager.query(`UPDATE digests SET subject = $2, html = $3, text = $4 WHERE id = $1`, [waiting.id, merged.subject, merged.html, merged.text]);
        // A worker that skipped the row while this transaction held it has finished its job: queue the delivery again.
        await ctx.jobs.enqueueDigest(manager, waiting.id);
        continue;
      }
    }
    const message = await renderDigest(siteFacts, input.kind, r.name, linksFor(ctx.config, r.user_id), input.runId ? [input.runId] : []);
    const rows: { id: string }[] = await manager.query(
      `INSERT INTO digests (study_id, site_id, recipient_id, recipient_email, kind, unique_key, run_id, subject, html, text)
       VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)
       ON CONFLICT (unique_key) DO NOTHING RETURNING id`,
      [input.studyId, r.site_id, r.user_id, r.email, input.kind, key, input.runId ?? null, message.subject, message.html, message.text],
    );
    if (!rows.length) continue;
    await ctx.jobs.enqueueDigest(manager, rows[0].id);
    queued++;
  }
  return { queued, skipped };
}

/** Called by lockRun inside its transaction: every principal of the study hears about the locked result once. */
export async function createLockDigests(manager: EntityManager, ctx: DigestContext, studyId: string, runId: string): Promise<SendDigestsResult> {
  return createDigests(manager, ctx, { studyId, kind: 'lock', key: `lock:${runId}`, runId });
}

/** "Send now": a digest for every principal of the study, whatever the schedule says. */
export async function sendDigestsNow(db: DataSource, ctx: DigestContext, user: SessionUser, studyId: string): Promise<SendDigestsResult> {
  return db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    const result = await createDigests(manager, ctx, { studyId, kind: 'manual', key: `manual:${randomUUID()}` });
    await recordAudit(manager, { actorId: user.id, studyId, action: 'digests.sent', entityType: 'study', entityId: studyId, after: result });
    return result;
  });
}

// Delivery

interface DigestRow {
  id: string;
  study_id: string;
  site_id: string;
  site_name: string;
  recipient_id: string;
  recipient_name: string;
  recipient_email: string;
  kind: DigestKind;
  subject: string;
  html?: string;
  text?: string;
  state: Digest['state'];
  attempts: number;
  last_error: string | null;
  next_attempt_at: Date | null;
  created_at: Date;
  sent_at: Date | null;
}

/** Kinds of outbox message that are digests (the others are invitations, password resets and reminders). */
const digestKinds = ['weekly', 'lock', 'manual'];

function messageId(config: Pick<Config, 'mailFrom'>, kind: string, id: string): string {
  const domain = config.mailFrom.match(/@([^>\s]+)/)?.[1] ?? 'evenhand.invalid';
  return `<${digestKinds.includes(kind) ? 'digest' : kind.replace('_', '-')}-${id}@${domain}>`;
}

function describeFailure(err: unknown): string {
  const e = err as { code?: string; responseCode?: number; message?: string };
  const what = e.message ?? String(err);
  return (e.code && !what.includes(e.code) ? `${e.code}: ${what}` : what).slice(0, 500);
}

export interface DeliveryContext {
  db: DataSource;
  mailer: Mailer;
  config: Pick<Config, 'mailFrom' | 'appUrl' | 'jwtSecret'>;
  jobs: Pick<JobQueue, 'enqueueDigest'>;
  logger: Logger;
  delivery: DeliveryPolicy;
}

/**
 * One delivery attempt of any message in the outbox (digests and every other e-mail). The row stays locked while the SMTP server is asked, so a second worker
 * holding a duplicate job skips it, and a digest is marked sent only once the server has accepted it.
 */
export async function deliverDigest(ctx: DeliveryContext, digestId: string): Promise<void> {
  await ctx.db.transaction(async (manager) => {
    const [d]: DigestRow[] = await manager.query(
      `SELECT id, kind, recipient_id, recipient_email, subject, html, text, attempts FROM digests
        WHERE id = $1 AND state IN ('queued', 'retrying') FOR UPDATE SKIP LOCKED`,
      [digestId],
    );
    if (!d) return; // already sent or undeliverable, or another worker holds it right now
    const attempts = d.attempts + 1;
    try {
      const unsubscribe = `${ctx.config.appUrl}/api/digest-preferences/one-click?token=${encodeURIComponent(preferenceToken(ctx.config, d.recipient_id))}`;
      await ctx.mailer.send({
        to: d.recipient_email,
        subject: d.subject,
        text: d.text!,
        html: d.html!,
        messageId: messageId(ctx.config, d.kind, d.id),
        // RFC 8058: mail programs can offer their own one-click unsubscribe (of digests; other mail is not optional).
        ...(digestKinds.includes(d.kind) ? { headers: { 'List-Unsubscribe': `<${unsubscribe}>`, 'List-Unsubscribe-Post': 'List-Unsubscribe=One-Click' } } : {}),
      });
    } catch (err) {
      const error = describeFailure(err);
      if (attempts >= ctx.delivery.maxAttempts) {
        await manager.query(`UPDATE digests SET state = 'undeliverable', attempts = $2, last_error = $3, next_attempt_at = NULL WHERE id = $1`, [d.id, attempts, error]);
        ctx.logger.warn({ digestId, kind: d.kind, attempts, error }, 'outbox message undeliverable');
      } else {
        const wait = retryDelaySeconds(ctx.delivery, attempts);
        await manager.query(
          `UPDATE digests SET state = 'retrying', attempts = $2, last_error = $3, next_attempt_at = now() + $4 * interval '1 second' WHERE id = $1`,
          [d.id, attempts, error, wait],
        );
        await ctx.jobs.enqueueDigest(manager, d.id, wait);
      }
      return;
    }
    await manager.query(`UPDATE digests SET state = 'sent', attempts = $2, sent_at = now(), next_attempt_at = NULL WHERE id = $1`, [d.id, attempts]);
  });
}

// The weekly schedule

interface ScheduleRow {
  study_id: string;
  weekly_enabled: boolean;
  weekday: number;
  hour: number;
  timezone: string;
}

const weekdayNumber: Record<string, number> = { Mon: 1, Tue: 2, Wed: 3, Thu: 4, Fri: 5, Sat: 6, Sun: 7 };

function localTime(at: Date, timeZone: string) {
  const parts = Object.fromEntries(
    new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', hourCycle: 'h23', weekday: 'short' })
      .formatToParts(at)
      .map((p) => [p.type, p.value]),
  );
  return { date: `${parts.year}-${parts.month}-${parts.day}`, hour: Number(parts.hour), weekday: weekdayNumber[parts.weekday] };
}

const dayBefore = (isoDate: string) => new Date(Date.parse(`${isoDate}T00:00:00Z`) - 86_400_000).toISOString().slice(0, 10);

/**
 * The local date of this week's digest if it is due at `now`: from the chosen weekday and hour until a day later,
 * so a tick missed while the service was down is made up for, and the date in the key makes it happen once.
 */
export function dueWeeklySlot(now: Date, schedule: Pick<DigestSchedule, 'weekday' | 'hour' | 'timezone'>): string | null {
  const local = localTime(now, schedule.timezone);
  if (local.weekday === schedule.weekday && local.hour >= schedule.hour) return local.date;
  if (local.weekday === (schedule.weekday % 7) + 1 && local.hour < schedule.hour) return dayBefore(local.date);
  return null;
}

export interface TickContext extends DigestContext {
  db: DataSource;
  logger: Logger;
}

/** The scheduled tick: weekly digests for studies with an open wave, and a sweep of the outbox for stuck digests. */
export async function runDigestTick(ctx: TickContext, now = new Date()): Promise<{ weekly: number; requeued: number }> {
  const studies: ScheduleRow[] = await ctx.db.query(
    `SELECT s.id AS study_id, coalesce(d.weekly_enabled, $1) AS weekly_enabled, coalesce(d.weekday, $2) AS weekday,
            coalesce(d.hour, $3) AS hour, coalesce(d.timezone, $4) AS timezone
       FROM studies s LEFT JOIN digest_schedules d ON d.study_id = s.id
      WHERE s.status <> 'archived'`,
    [defaultDigestSchedule.weeklyEnabled, defaultDigestSchedule.weekday, defaultDigestSchedule.hour, defaultDigestSchedule.timezone],
  );
  let weekly = 0;
  for (const s of studies) {
    if (!s.weekly_enabled) continue;
    const slot = dueWeeklySlot(now, s);
    if (!slot) continue;
    try {
      weekly += await ctx.db.transaction(async (manager) => {
        const [open] = await manager.query(`SELECT 1 FROM waves WHERE study_id = $1 AND opens_on <= $2::date AND closes_on >= $2::date LIMIT 1`, [s.study_id, slot]);
        if (!open) return 0;
        return (await createDigests(manager, ctx, { studyId: s.study_id, kind: 'weekly', key: `weekly:${s.study_id}:${slot}` })).queued;
      });
    } catch (err) {
      ctx.logger.error({ err, studyId: s.study_id }, 'weekly digests failed for a study');
    }
  }
  // A digest whose job was lost (a queue outage, a job dropped after its own retries) is picked up again here.
  const stuck: { id: string }[] = await ctx.db.query(
    `SELECT id FROM digests WHERE state IN ('queued', 'retrying') AND next_attempt_at < now() - interval '10 minutes' ORDER BY next_attempt_at LIMIT 500`,
  );
  for (const d of stuck) await ctx.jobs.enqueueDigest(ctx.db.manager, d.id);
  return { weekly, requeued: stuck.length };
}

export async function getSchedule(db: DataSource, user: SessionUser, studyId: string): Promise<DigestSchedule> {
  await findVisibleStudy(db.manager, user, studyId);
  const [row]: ScheduleRow[] = await db.query(`SELECT weekly_enabled, weekday, hour, timezone FROM digest_schedules WHERE study_id = $1`, [studyId]);
  return row ? { weeklyEnabled: row.weekly_enabled, weekday: row.weekday, hour: row.hour, timezone: row.timezone } : { ...defaultDigestSchedule };
}

export async function saveSchedule(db: DataSource, user: SessionUser, studyId: string, input: DigestSchedule): Promise<DigestSchedule> {
  const before = await getSchedule(db, user, studyId);
  await db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    await manager.query(
      `INSERT INTO digest_schedules (study_id, weekly_enabled, weekday, hour, timezone, updated_by) VALUES ($1, $2, $3, $4, $5, $6)
       ON CONFLICT (study_id) DO UPDATE SET weekly_enabled = $2, weekday = $3, hour = $4, timezone = $5, updated_by = $6, updated_at = now()`,
      [studyId, input.weeklyEnabled, input.weekday, input.hour, input.timezone, user.id],
    );
    await recordAudit(manager, { actorId: user.id, studyId, action: 'digest_schedule.changed', entityType: 'study', entityId: studyId, before, after: input });
  });
  return input;
}

// Reading the outbox

const digestSelect = `
  SELECT d.id, d.study_id, d.site_id, s.name AS site_name, d.recipient_id, u.name AS recipient_name, d.recipient_email,
         d.kind, d.subject, d.state, d.attempts, d.last_error, d.next_attempt_at, d.created_at, d.sent_at
    FROM digests d JOIN sites s ON s.id = d.site_id JOIN users u ON u.id = d.recipient_id`;

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);

function toDigest(r: DigestRow): Digest {
  return {
    id: r.id,
    studyId: r.study_id,
    siteId: r.site_id,
    siteName: r.site_name,
    recipient: { id: r.recipient_id, name: r.recipient_name, email: r.recipient_email },
    kind: r.kind,
    subject: r.subject,
    state: r.state,
    attempts: r.attempts,
    lastError: r.last_error,
    createdAt: iso(r.created_at)!,
    sentAt: iso(r.sent_at),
    nextAttemptAt: iso(r.next_attempt_at),
  };
}

export async function listDigests(db: DataSource, user: SessionUser, studyId: string, query: DigestsQuery): Promise<{ items: Digest[]; total: number }> {
  await findVisibleStudy(db.manager, user, studyId);
  const filter = query.state ? 'AND d.state = $2' : '';
  const params: unknown[] = query.state ? [studyId, query.state] : [studyId];
  const rows: DigestRow[] = await db.query(
    `${digestSelect} WHERE d.study_id = $1 AND d.kind = ANY('{weekly,lock,manual}') ${filter} ORDER BY d.created_at DESC, s.name, d.recipient_email LIMIT ${query.limit} OFFSET ${query.offset}`,
    params,
  );
  const [{ total }] = await db.query(`SELECT count(*)::int AS total FROM digests d WHERE d.study_id = $1 AND d.kind = ANY('{weekly,lock,manual}') ${filter}`, params);
  return { items: rows.map(toDigest), total };
}

export async function getDigest(db: DataSource, user: SessionUser, id: string): Promise<DigestDetail> {
  const [row]: DigestRow[] = await db.query(`${digestSelect.replace('d.sent_at', 'd.sent_at, d.html, d.text')} WHERE d.id = $1`, [id]);
  if (!row) throw AppError.notFound('The digest');
  await findVisibleStudy(db.manager, user, row.study_id);
  return { ...toDigest(row), html: row.html!, text: row.text! };
}

/**
 * Waits until every digest in the outbox has had its first delivery attempt (or the time is up), and says how
 * it went; the demo seed uses it so it neither exits before its digests are sent nor hangs without an SMTP server.
 */
export async function waitForOutbox(db: DataSource, timeoutMs: number): Promise<{ sent: number; queued: number; retrying: number; undeliverable: number; lastError: string | null }> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const [c] = await db.query(
      `SELECT count(*) FILTER (WHERE state = 'sent')::int AS sent, count(*) FILTER (WHERE state = 'queued')::int AS queued,
              count(*) FILTER (WHERE state = 'retrying')::int AS retrying, count(*) FILTER (WHERE state = 'undeliverable')::int AS undeliverable,
              (SELECT last_error FROM digests WHERE state IN ('retrying', 'undeliverable') ORDER BY created_at DESC LIMIT 1) AS last_error
         FROM digests`,
    );
    if (c.queued === 0 || Date.now() > until) return { sent: c.sent, queued: c.queued, retrying: c.retrying, undeliverable: c.undeliverable, lastError: c.last_error };
    await new Promise((r) => setTimeout(r, 200));
  }
}

// The principal's side: My school and the e-mail preferences

async function frequencyOf(manager: EntityManager, userId: string): Promise<DigestFrequency> {
  const [row] = await manager.query(`SELECT frequency FROM digest_preferences WHERE user_id = $1`, [userId]);
  return row?.frequency ?? 'weekly';
}

/** My school: the digest's facts, live, for each of the principal's own schools in each of its studies. */
export async function mySchool(db: DataSource, config: Pick<Config, 'jwtSecret'>, user: SessionUser): Promise<MySchool> {
  const sites = sitesOf(user, 'principal');
  const pairs: { study_id: string; site_id: string }[] = sites.length
    ? await db.query(
        `SELECT ss.study_id, ss.site_id FROM study_sites ss JOIN studies s ON s.id = ss.study_id JOIN sites x ON x.id = ss.site_id
          WHERE ss.site_id = ANY($1) AND s.status <> 'archived' ORDER BY s.created_at DESC, x.name`,
        [sites],
      )
    : [];
  const items: SiteFacts[] = [];
  for (const p of pairs) items.push(await buildSiteFacts(db.manager, p.study_id, p.site_id));
  return { items, total: items.length, digests: { frequency: await frequencyOf(db.manager, user.id), preferencesToken: preferenceToken(config, user.id) } };
}

export async function getPreference(db: DataSource, config: Pick<Config, 'jwtSecret'>, token: string): Promise<DigestPreference> {
  const userId = userOfToken(config, token);
  const [user] = await db.query(`SELECT name FROM users WHERE id = $1`, [userId]);
  if (!user) throw AppError.validation('This link is not valid any more');
  return { name: user.name, frequency: await frequencyOf(db.manager, userId) };
}

/** Changes how often the link's owner gets digests; no sign-in, the signed link is the proof. Audited. */
export async function setPreference(db: DataSource, config: Pick<Config, 'jwtSecret'>, token: string, frequency: DigestFrequency, via: string): Promise<DigestPreference> {
  const userId = userOfToken(config, token);
  return db.transaction(async (manager) => {
    const [user] = await manager.query(`SELECT name FROM users WHERE id = $1 FOR UPDATE`, [userId]);
    if (!user) throw AppError.validation('This link is not valid any more');
    const before = await frequencyOf(manager, userId);
    await manager.query(
      `INSERT INTO digest_preferences (user_id, frequency) VALUES ($1, $2) ON CONFLICT (user_id) DO UPDATE SET frequency = $2, updated_at = now()`,
      [userId, frequency],
    );
    await recordAudit(manager, { actorId: userId, action: 'digest.preference_changed', entityType: 'user', entityId: userId, before: { frequency: before }, after: { frequency, via } });
    return { name: user.name, frequency };
  });
}

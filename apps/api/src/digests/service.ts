import { randomUUID } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import type { Digest, DigestDetail, DigestFrequency, DigestKind, DigestsQuery, SendDigestsResult, SessionUser, SiteFacts } from '@evenhand/entities';
import { recordAudit } from '../audit/service.js';
import type { Config } from '../config.js';
import { AppError } from '../errors.js';
import type { JobQueue } from '../jobs/queue.js';
import type { Logger } from '../logger.js';
import type { Mailer } from '../mail/mailer.js';
import { findVisibleStudy } from '../studies/access.js';
import { buildSiteFacts } from './facts.js';
import { linksFor, preferenceToken } from './preferences.js';
import {
  claimDeliverySql,
  digestKeyTakenSql,
  digestWithBodySql,
  insertDigestSql,
  markRetryingSql,
  markSentSql,
  markUndeliverableSql,
  outboxCountsSql,
  recipientsSql,
  rewriteDigestSql,
  studyDigestCountSql,
  studyDigestsSql,
  waitingLockDigestSql,
  type DigestRow,
  type Recipient,
} from './queries.js';
import { renderDigest } from './templates.js';

// Digests in the outbox: written per principal and school, delivered with retries (every other e-mail too), read back.
// The weekly schedule is in ./schedules.ts, the principal's preferences and My school in ./preferences.ts.

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

/** Principals of the study's schools: everyone with an active principal grant for an enrolled site. */
async function recipientsOf(manager: EntityManager, studyId: string): Promise<Recipient[]> {
  return manager.query(recipientsSql, [studyId]);
}


const wants: Record<DigestKind, DigestFrequency[]> = { weekly: ['weekly'], lock: ['weekly', 'locked'], manual: ['weekly', 'locked'] };

/**
 * Writes one digest per principal and school into the outbox, inside the caller's transaction, and enqueues its
 * delivery in the same transaction. `key` makes it idempotent: the same event processed twice adds nothing.
 */
export async function createDigests(
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
    const [exists] = await manager.query(digestKeyTakenSql, [key]);
    if (exists) continue;
    if (!facts.has(r.site_id)) facts.set(r.site_id, await buildSiteFacts(manager, input.studyId, r.site_id));
    const siteFacts = facts.get(r.site_id)!;
    if (input.kind === 'lock') {
      // A lead often locks several comparisons in a row: while this principal's lock digest still waits in the outbox
      // (no worker holds it), it is rewritten to name every result locked since, so one e-mail tells of the event.
      const [waiting]: { id: string; locked_at: Date }[] = await manager.query(
        waitingLockDigestSql,
        [input.studyId, r.site_id, r.user_id],
      );
      if (waiting) {
        const since = new Date(waiting.locked_at).getTime();
        const newly = siteFacts.results.filter((x) => x.runId === input.runId || Date.parse(x.lockedAt) >= since).map((x) => x.runId);
        const merged = await renderDigest(siteFacts, 'lock', r.name, linksFor(ctx.config, r.user_id), newly);
        await manager.query(rewriteDigestSql, [waiting.id, merged.subject, merged.html, merged.text]);
        // A worker that skipped the row while this transaction held it has finished its job: queue the delivery again.
        await ctx.jobs.enqueueDigest(manager, waiting.id);
        continue;
      }
    }
    const message = await renderDigest(siteFacts, input.kind, r.name, linksFor(ctx.config, r.user_id), input.runId ? [input.runId] : []);
    const rows: { id: string }[] = await manager.query(
      insertDigestSql,
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
    const [d]: DigestRow[] = await manager.query(claimDeliverySql, [digestId]);
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
        await manager.query(markUndeliverableSql, [d.id, attempts, error]);
        ctx.logger.warn({ digestId, kind: d.kind, attempts, error }, 'outbox message undeliverable');
      } else {
        const wait = retryDelaySeconds(ctx.delivery, attempts);
        await manager.query(markRetryingSql, [d.id, attempts, error, wait]);
        await ctx.jobs.enqueueDigest(manager, d.id, wait);
      }
      return;
    }
    await manager.query(markSentSql, [d.id, attempts]);
  });
}

// Reading the outbox

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
  const state = query.state ?? null;
  const rows: DigestRow[] = await db.query(studyDigestsSql, [studyId, state, query.limit, query.offset]);
  const [{ total }] = await db.query(studyDigestCountSql, [studyId, state]);
  return { items: rows.map(toDigest), total };
}

export async function getDigest(db: DataSource, user: SessionUser, id: string): Promise<DigestDetail> {
  const [row]: DigestRow[] = await db.query(digestWithBodySql, [id]);
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
    const [c] = await db.query(outboxCountsSql);
    if (c.queued === 0 || Date.now() > until) return { sent: c.sent, queued: c.queued, retrying: c.retrying, undeliverable: c.undeliverable, lastError: c.last_error };
    await new Promise((r) => setTimeout(r, 200));
  }
}

import type { EntityManager } from 'typeorm';
import { recordAudit } from '../audit/service.js';
import type { JobQueue } from '../jobs/queue.js';

/** Kinds of mail besides digests; each goes through the outbox like a digest does. */
export type MailKind = 'invitation' | 'role_invitation' | 'password_reset' | 'reminder';

/** What queueing mail needs: the delivery job comes from the queue. */
export interface MailContext {
  jobs: Pick<JobQueue, 'enqueueDigest'>;
}

export interface QueuedMail {
  kind: MailKind;
  recipient: { id: string; email: string };
  message: { subject: string; html: string; text: string };
  /** Who caused it (null when the recipient asked for it themselves, as with a password reset). */
  actorId: string | null;
  /** The study it is about, for the audit trail (a study's outbox listing shows its digests only). */
  studyId?: string | null;
}

/**
 * Writes a message into the outbox and enqueues its delivery, both inside the caller's transaction: the message exists
 * exactly when the event that caused it commits, and is sent once, with retries, by the outbox's job. Audited without
 * its text (links in it carry single-use tokens).
 */
export async function queueMail(manager: EntityManager, ctx: MailContext, mail: QueuedMail): Promise<string> {
  const [{ id }]: { id: string }[] = await manager.query(
    `INSERT INTO digests (recipient_id, recipient_email, kind, unique_key, subject, html, text)
     VALUES ($1, $2, $3, 'mail:' || gen_random_uuid(), $4, $5, $6) RETURNING id`,
    [mail.recipient.id, mail.recipient.email, mail.kind, mail.message.subject, mail.message.html, mail.message.text],
  );
  await ctx.jobs.enqueueDigest(manager, id);
  await recordAudit(manager, {
    actorId: mail.actorId,
    studyId: mail.studyId ?? null,
    action: 'mail.queued',
    entityType: 'mail',
    entityId: id,
    after: { kind: mail.kind, to: mail.recipient.email, subject: mail.message.subject },
  });
  return id;
}

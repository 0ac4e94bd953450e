import { randomUUID } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { recordAudits } from '../audit/service.js';
import type { JobQueue } from '../jobs/queue.js';
import { insertOutboxMails } from './queries.js';

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
  return (await queueMails(manager, ctx, [mail]))[0];
}

/** `queueMail` for many messages at once (a roster import's invitations): three statements whatever the number. */
export async function queueMails(manager: EntityManager, ctx: MailContext, mails: readonly QueuedMail[]): Promise<string[]> {
  if (!mails.length) return [];
  const ids = mails.map(() => randomUUID());
  await insertOutboxMails(
    manager,
    mails.map((m, i) => ({ id: ids[i], recipientId: m.recipient.id, recipientEmail: m.recipient.email, kind: m.kind, ...m.message })),
  );
  await ctx.jobs.enqueueDigest(manager, ids);
  await recordAudits(
    manager,
    mails.map((mail, i) => ({
      actorId: mail.actorId,
      studyId: mail.studyId ?? null,
      action: 'mail.queued',
      entityType: 'mail',
      entityId: ids[i],
      after: { kind: mail.kind, to: mail.recipient.email, subject: mail.message.subject },
    })),
  );
  return ids;
}

import type { EntityManager } from 'typeorm';
import type { MailKind } from './outbox.js';

// The outbox's named SQL for mail besides digests (DEVELOPERS.md, "Data access").

/** Writes messages into the outbox (the digests table) in one statement, each keyed by its own ID. */
export async function insertOutboxMails(
  manager: EntityManager,
  mails: readonly { id: string; recipientId: string; recipientEmail: string; kind: MailKind; subject: string; html: string; text: string }[],
): Promise<void> {
  await manager.query(
    `INSERT INTO digests (id, recipient_id, recipient_email, kind, unique_key, subject, html, text)
     SELECT id, recipient_id, recipient_email, kind, 'mail:' || id, subject, html, text
       FROM unnest($1::uuid[], $2::uuid[], $3::text[], $4::text[], $5::text[], $6::text[], $7::text[]) AS m(id, recipient_id, recipient_email, kind, subject, html, text)`,
    [mails.map((m) => m.id), mails.map((m) => m.recipientId), mails.map((m) => m.recipientEmail), mails.map((m) => m.kind), mails.map((m) => m.subject), mails.map((m) => m.html), mails.map((m) => m.text)],
  );
}

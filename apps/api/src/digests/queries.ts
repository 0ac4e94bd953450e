import type { Digest, DigestFrequency, DigestKind } from '@evenhand/entities';

// The digests' named SQL and the rows it answers (DEVELOPERS.md, "Data access").

export interface Recipient {
  user_id: string;
  name: string;
  email: string;
  site_id: string;
  frequency: DigestFrequency;
}

/** Principals of a study's schools: everyone with an active principal grant for an enrolled site. */
export const recipientsSql = `
  SELECT u.id AS user_id, u.name, u.email, ss.site_id, coalesce(p.frequency, 'weekly') AS frequency
    FROM study_sites ss
    JOIN sites s ON s.id = ss.site_id
    JOIN role_grants g ON g.site_id = ss.site_id AND g.role = 'principal'
    JOIN users u ON u.id = g.user_id AND u.active
    LEFT JOIN digest_preferences p ON p.user_id = u.id
   WHERE ss.study_id = $1
   ORDER BY s.name, u.email`;

/** A principal's lock digest of a school still waiting in the outbox (no worker holds it), locked for rewriting. */
export const waitingLockDigestSql = `
  SELECT d.id, r.locked_at FROM digests d JOIN runs r ON r.id = d.run_id
   WHERE d.study_id = $1 AND d.site_id = $2 AND d.recipient_id = $3 AND d.kind = 'lock' AND d.state = 'queued' AND d.attempts = 0
   ORDER BY d.created_at LIMIT 1 FOR UPDATE OF d SKIP LOCKED`;

export interface DigestRow {
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

export const digestSelect = `
  SELECT d.id, d.study_id, d.site_id, s.name AS site_name, d.recipient_id, u.name AS recipient_name, d.recipient_email,
         d.kind, d.subject, d.state, d.attempts, d.last_error, d.next_attempt_at, d.created_at, d.sent_at
    FROM digests d JOIN sites s ON s.id = d.site_id JOIN users u ON u.id = d.recipient_id`;

/** The outbox's messages by state, with the last error. */
export const outboxCountsSql = `
  SELECT count(*) FILTER (WHERE state = 'sent')::int AS sent, count(*) FILTER (WHERE state = 'queued')::int AS queued,
         count(*) FILTER (WHERE state = 'retrying')::int AS retrying, count(*) FILTER (WHERE state = 'undeliverable')::int AS undeliverable,
         (SELECT last_error FROM digests WHERE state IN ('retrying', 'undeliverable') ORDER BY created_at DESC LIMIT 1) AS last_error
    FROM digests`;

export interface ScheduleRow {
  study_id: string;
  weekly_enabled: boolean;
  weekday: number;
  hour: number;
  timezone: string;
}

/** Every study's digest schedule, the defaults ($1–$4) where it has none; archived studies get none. */
export const studySchedulesSql = `
  SELECT s.id AS study_id, coalesce(d.weekly_enabled, $1) AS weekly_enabled, coalesce(d.weekday, $2) AS weekday,
         coalesce(d.hour, $3) AS hour, coalesce(d.timezone, $4) AS timezone
    FROM studies s LEFT JOIN digest_schedules d ON d.study_id = s.id
   WHERE s.status <> 'archived'`;

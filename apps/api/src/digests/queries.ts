import type { Arm, Digest, DigestFrequency, DigestKind, RunResults, SiteFacts } from '@evenhand/entities';

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

const digestColumns = `d.id, d.study_id, d.site_id, s.name AS site_name, d.recipient_id, u.name AS recipient_name, d.recipient_email,
         d.kind, d.subject, d.state, d.attempts, d.last_error, d.next_attempt_at, d.created_at, d.sent_at`;
const digestJoins = `FROM digests d JOIN sites s ON s.id = d.site_id JOIN users u ON u.id = d.recipient_id`;

/** One page of a study's digests (not the other mail in the outbox), newest first. $1 study, $2 state or null (all), $3 limit, $4 offset. */
export const studyDigestsSql = `
  SELECT ${digestColumns} ${digestJoins}
   WHERE d.study_id = $1 AND d.kind = ANY('{weekly,lock,manual}') AND ($2::text IS NULL OR d.state = $2)
   ORDER BY d.created_at DESC, s.name, d.recipient_email LIMIT $3 OFFSET $4`;
/** How many digests a study has in a state, or in all. $1 study, $2 state or null. */
export const studyDigestCountSql = `
  SELECT count(*)::int AS total FROM digests d WHERE d.study_id = $1 AND d.kind = ANY('{weekly,lock,manual}') AND ($2::text IS NULL OR d.state = $2)`;
/** One message with its bodies. $1 digest. */
export const digestWithBodySql = `SELECT ${digestColumns}, d.html, d.text ${digestJoins} WHERE d.id = $1`;

/** Whether a message with this unique key was written already. $1 key. */
export const digestKeyTakenSql = `SELECT 1 FROM digests WHERE unique_key = $1`;
/** Rewrites a lock digest still waiting to name every result locked since. $1 digest, $2 subject, $3 html, $4 text. */
export const rewriteDigestSql = `UPDATE digests SET subject = $2, html = $3, text = $4 WHERE id = $1`;
/** Writes one message into the outbox, once per unique key ($6). */
export const insertDigestSql = `
  INSERT INTO digests (study_id, site_id, recipient_id, recipient_email, kind, unique_key, run_id, subject, html, text)
  VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)
  ON CONFLICT (unique_key) DO NOTHING RETURNING id`;

/** Claims a message for one delivery attempt; nothing when it is sent, undeliverable or another worker holds it. $1 digest. */
export const claimDeliverySql = `
  SELECT id, kind, recipient_id, recipient_email, subject, html, text, attempts FROM digests
   WHERE id = $1 AND state IN ('queued', 'retrying') FOR UPDATE SKIP LOCKED`;
/** $1 digest, $2 attempts, $3 error. */
export const markUndeliverableSql = `UPDATE digests SET state = 'undeliverable', attempts = $2, last_error = $3, next_attempt_at = NULL WHERE id = $1`;
/** $1 digest, $2 attempts, $3 error, $4 seconds to wait. */
export const markRetryingSql = `UPDATE digests SET state = 'retrying', attempts = $2, last_error = $3, next_attempt_at = now() + $4 * interval '1 second' WHERE id = $1`;
/** $1 digest, $2 attempts. */
export const markSentSql = `UPDATE digests SET state = 'sent', attempts = $2, sent_at = now(), next_attempt_at = NULL WHERE id = $1`;

/** Messages whose delivery job was lost: due for more than 10 minutes. */
export const stuckDigestsSql = `
  SELECT id FROM digests WHERE state IN ('queued', 'retrying') AND next_attempt_at < now() - interval '10 minutes'
   ORDER BY next_attempt_at LIMIT 500`;
/** Whether a study has a wave open on a day. $1 study, $2 date. */
export const waveOpenOnSql = `SELECT 1 FROM waves WHERE study_id = $1 AND opens_on <= $2::date AND closes_on >= $2::date LIMIT 1`;
/** A study's own digest schedule, if it has one. $1 study. */
export const studyScheduleSql = `SELECT weekly_enabled, weekday, hour, timezone FROM digest_schedules WHERE study_id = $1`;
/** $1 study, $2 weekly, $3 weekday, $4 hour, $5 time zone, $6 who. */
export const saveScheduleSql = `
  INSERT INTO digest_schedules (study_id, weekly_enabled, weekday, hour, timezone, updated_by) VALUES ($1, $2, $3, $4, $5, $6)
  ON CONFLICT (study_id) DO UPDATE SET weekly_enabled = $2, weekday = $3, hour = $4, timezone = $5, updated_by = $6, updated_at = now()`;

/** A principal's digest frequency, if chosen. $1 user. */
export const frequencySql = `SELECT frequency FROM digest_preferences WHERE user_id = $1`;
/** $1 user, $2 frequency. */
export const savePreferenceSql = `
  INSERT INTO digest_preferences (user_id, frequency) VALUES ($1, $2) ON CONFLICT (user_id) DO UPDATE SET frequency = $2, updated_at = now()`;
/** The studies (not archived) a principal's schools ($1 uuid[]) take part in, newest first. */
export const principalStudySitesSql = `
  SELECT ss.study_id, ss.site_id FROM study_sites ss JOIN studies s ON s.id = ss.study_id JOIN sites x ON x.id = ss.site_id
   WHERE ss.site_id = ANY($1) AND s.status <> 'archived' ORDER BY s.created_at DESC, x.name`;

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

// What a principal is told about one school (facts.ts).

export interface StudySiteRow {
  id: string;
  title: string;
  intervention: string;
  comparison_condition: string;
  status: SiteFacts['study']['status'];
  unit_of_assignment: SiteFacts['study']['unitOfAssignment'];
  quasi_experimental: boolean;
  site_name: string;
}

/** A study ($1) with one of its schools ($2); nothing when the school is not enrolled. */
export const studySiteSql = `
  SELECT s.id, s.title, s.intervention, s.comparison_condition, s.status, s.unit_of_assignment, s.quasi_experimental, x.name AS site_name
    FROM studies s JOIN study_sites ss ON ss.study_id = s.id AND ss.site_id = $2 JOIN sites x ON x.id = ss.site_id
   WHERE s.id = $1`;

export interface SiteArmRow {
  arm: Arm | null;
  classrooms: number;
  students: number;
}

/** A school's classrooms and registered students per arm (null: not drawn yet). $1 study, $2 site. */
export const siteArmsSql = `
  SELECT c.arm, count(DISTINCT c.id)::int AS classrooms, count(st.student_code)::int AS students
    FROM classrooms c LEFT JOIN students st ON st.study_id = c.study_id AND st.classroom_id = c.id
   WHERE c.study_id = $1 AND c.site_id = $2
   GROUP BY c.arm`;

export interface WaveStatusRow {
  id: string;
  name: string;
  kind: SiteFacts['waves'][number]['kind'];
  opens_on: string;
  closes_on: string;
  status: 'upcoming' | 'open' | 'closed';
}

/** A study's waves with whether each is upcoming, open or closed today. $1 study. */
export const waveStatusSql = `
  SELECT id, name, kind, to_char(opens_on, 'YYYY-MM-DD') AS opens_on, to_char(closes_on, 'YYYY-MM-DD') AS closes_on,
         CASE WHEN current_date < opens_on THEN 'upcoming' WHEN current_date > closes_on THEN 'closed' ELSE 'open' END AS status
    FROM waves WHERE study_id = $1 ORDER BY opens_on, name`;

export interface SiteSheetRow {
  wave_id: string;
  classroom_name: string;
  measure_name: string;
  state: string;
}

/** Every sheet a school's classrooms owe (one per wave and measure, 'open' until its row exists). $1 study, $2 site. */
export const siteSheetsSql = `
  SELECT w.id AS wave_id, c.name AS classroom_name, m.name AS measure_name, coalesce(sh.state, 'open') AS state
    FROM classrooms c
    JOIN measures m ON m.study_id = c.study_id
    JOIN waves w ON w.study_id = c.study_id
    LEFT JOIN score_sheets sh ON sh.classroom_id = c.id AND sh.measure_id = m.id AND sh.wave_id = w.id
   WHERE c.study_id = $1 AND c.site_id = $2
   ORDER BY c.name, m.name`;

export interface LockedRunRow {
  id: string;
  results: RunResults;
  locked_at: Date;
  label: string;
  is_primary: boolean;
  /** The final wording of the verdict stored at the lock, against the boundary its plan registered. */
  evidence?: string | null;
}

/** A study's locked results with their stored verdict's wording, the primary first. $1 study. */
export const lockedRunsSql = `
  SELECT r.id, r.results, r.locked_at, k.label, k.is_primary,
         CASE v.boundary WHEN 'optimistic' THEN v.optimistic->>'wording' ELSE v.cautious->>'wording' END AS evidence
    FROM runs r JOIN comparisons k ON k.id = r.comparison_id LEFT JOIN run_verdicts v ON v.run_id = r.id
   WHERE r.study_id = $1 AND r.state = 'locked' AND r.results IS NOT NULL
   ORDER BY k.is_primary DESC, r.locked_at, r.id`;

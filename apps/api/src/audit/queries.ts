import type { EntityManager } from 'typeorm';

// The audit trail's named SQL (DEVELOPERS.md, "Data access").

/** One audit entry as stored: before and after as JSON text (null when absent). */
export interface AuditEventRow {
  actorId: string | null;
  action: string;
  entityType: string;
  entityId: string | null;
  studyId: string | null;
  before: string | null;
  after: string | null;
}

/** Appends audit entries in one statement, whatever their number. */
export async function insertAuditEvents(manager: EntityManager, rows: readonly AuditEventRow[]): Promise<void> {
  await manager.query(
    `INSERT INTO audit_events (actor_id, action, entity_type, entity_id, study_id, before, after)
     SELECT * FROM unnest($1::uuid[], $2::text[], $3::text[], $4::text[], $5::uuid[], $6::jsonb[], $7::jsonb[])`,
    [
      rows.map((e) => e.actorId),
      rows.map((e) => e.action),
      rows.map((e) => e.entityType),
      rows.map((e) => e.entityId),
      rows.map((e) => e.studyId),
      rows.map((e) => e.before),
      rows.map((e) => e.after),
    ],
  );
}

export interface AuditListRow {
  id: string;
  at: Date;
  action: string;
  entity_type: string;
  entity_id: string | null;
  study_id: string | null;
  before: unknown;
  after: unknown;
  actor_id: string | null;
  actor_email: string | null;
}

/** A page of the audit trail (of one study, or all), newest first, each entry with its actor's e-mail, and how many entries there are. */
export async function auditPage(manager: EntityManager, q: { studyId?: string; limit: number; offset: number }): Promise<{ rows: AuditListRow[]; total: number }> {
  const [rows, [{ total }]] = await Promise.all([
    manager.query(
      `SELECT e.id, e.at, e.action, e.entity_type, e.entity_id, e.study_id, e.before, e.after, e.actor_id, u.email AS actor_email
         FROM audit_events e LEFT JOIN users u ON u.id = e.actor_id
        WHERE ($1::uuid IS NULL OR e.study_id = $1)
        ORDER BY e.at DESC, e.id DESC LIMIT $2 OFFSET $3`,
      [q.studyId ?? null, q.limit, q.offset],
    ) as Promise<AuditListRow[]>,
    manager.query(`SELECT count(*)::int AS total FROM audit_events e WHERE ($1::uuid IS NULL OR e.study_id = $1)`, [q.studyId ?? null]) as Promise<{ total: number }[]>,
  ]);
  return { rows, total };
}

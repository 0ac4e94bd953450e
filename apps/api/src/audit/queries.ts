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

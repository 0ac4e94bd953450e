import type { EntityManager } from 'typeorm';
import { studentValueViewerRoles, type AuditEvent, type AuditQuery, type SessionUser } from '@evenhand/entities';
import { auditPage, insertAuditEvents } from './queries.js';

export interface AuditEntry {
  actorId: string | null;
  action: string;
  entityType: string;
  entityId?: string | null;
  studyId?: string | null;
  before?: unknown;
  after?: unknown;
}

/** Records an audit event inside the caller's transaction, so the change and its record land together. */
export async function recordAudit(manager: EntityManager, entry: AuditEntry): Promise<void> {
  await recordAudits(manager, [entry]);
}

/** Records audit events in one statement (a bulk change audits each row it touched), in the caller's transaction. */
export async function recordAudits(manager: EntityManager, entries: readonly AuditEntry[]): Promise<void> {
  if (!entries.length) return;
  // jsonb columns take any JSON value; undefined (an absent before or after) is stored as null.
  const json = (v: unknown) => (v === undefined || v === null ? null : JSON.stringify(v));
  await insertAuditEvents(
    manager,
    entries.map((e) => ({ ...e, entityId: e.entityId ?? null, studyId: e.studyId ?? null, before: json(e.before), after: json(e.after) })),
  );
}

/** Audit actions whose entries carry student-level values (scores or lists by student code). */
const studentLevelActions = new Set(['scores.changed', 'roster.students_changed']);

/** The entry as a viewer without access to student values sees it: that it happened, and how many, but no values. */
function withoutStudentValues(event: AuditEvent): AuditEvent {
  const summary: Record<string, unknown> = { studentValuesWithheld: true };
  for (const [key, value] of Object.entries((event.after ?? {}) as Record<string, unknown>)) {
    if (Array.isArray(value)) summary[key] = value.length;
    else if (typeof value === 'number' || typeof value === 'boolean') summary[key] = value;
  }
  return { ...event, before: null, after: summary };
}

export async function listAudit(manager: EntityManager, viewer: SessionUser, query: AuditQuery): Promise<{ items: AuditEvent[]; total: number }> {
  const { rows, total } = await auditPage(manager, query);
  const items = rows.map((e) => ({
    id: e.id,
    at: new Date(e.at).toISOString(),
    actor: e.actor_id ? { id: e.actor_id, email: e.actor_email ?? '(deleted)' } : null,
    action: e.action,
    entityType: e.entity_type,
    entityId: e.entity_id,
    studyId: e.study_id,
    before: e.before ?? null,
    after: e.after ?? null,
  }));
  const seesValues = viewer.roles.some((g) => (studentValueViewerRoles as readonly string[]).includes(g.role));
  return { items: seesValues ? items : items.map((e) => (studentLevelActions.has(e.action) ? withoutStudentValues(e) : e)), total };
}

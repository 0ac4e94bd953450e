import type { SessionUser, ToDoItem, ToDoKind } from '@evenhand/entities';
import type { DataSource } from 'typeorm';
import { hasRole } from '../studies/access.js';
import { toDoQueries, type Counted } from './queries.js';

/** Who is asked to do each thing; a person with several roles gets the union, each thing once. */
const kindsByRole = {
  coordinator: ['sheets_to_review', 'late_sheets', 'sites_to_enrol', 'draw_to_run', 'undeliverable_digests'],
  research_lead: ['plan_to_seal', 'runs_to_lock', 'undeliverable_digests'],
  reviewer: ['results_to_read'],
  admin: ['invitations_pending', 'accounts_without_role'],
} satisfies Partial<Record<SessionUser['roles'][number]['role'], ToDoKind[]>>;

/** What waits for this person, in the order of the kinds, then by study title. */
export async function listToDo(db: DataSource, user: SessionUser): Promise<{ items: ToDoItem[] }> {
  const kinds = new Set<ToDoKind>();
  for (const [role, list] of Object.entries(kindsByRole)) {
    if (hasRole(user, role as keyof typeof kindsByRole)) for (const kind of list) kinds.add(kind);
  }
  const ordered = Object.keys(toDoQueries).filter((k): k is ToDoKind => kinds.has(k as ToDoKind));
  const answers = await Promise.all(ordered.map(async (kind) => ({ kind, rows: (await db.query(toDoQueries[kind])) as Counted[] })));
  return {
    items: answers.flatMap(({ kind, rows }) =>
      rows
        .filter((r) => r.n > 0)
        .sort((a, b) => (a.title ?? '').localeCompare(b.title ?? ''))
        .map((r) => ({ kind, count: r.n, study: r.study_id ? { id: r.study_id, title: r.title! } : null })),
    ),
  };
}

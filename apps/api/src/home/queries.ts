import type { ToDoKind } from '@evenhand/entities';

// The home page's named SQL (DEVELOPERS.md, "Data access"): aggregates over several tables, one per kind of to-do.

export interface Counted {
  study_id: string | null;
  title: string | null;
  n: number;
}

// Each query answers one row per study (or one for the district) with how many things wait; archived studies wait for nobody.
export const toDoQueries: Record<ToDoKind, string> = {
  sheets_to_review: `
    SELECT s.id AS study_id, s.title, count(*)::int AS n FROM score_sheets sh JOIN studies s ON s.id = sh.study_id
     WHERE sh.state = 'submitted' AND s.status <> 'archived' GROUP BY s.id, s.title`,
  // Sheets are created on first look, so a classroom's sheet that no one has opened counts as open (late) too.
  late_sheets: `
    SELECT s.id AS study_id, s.title, count(*)::int AS n
      FROM classrooms c JOIN studies s ON s.id = c.study_id
      JOIN waves w ON w.study_id = s.id JOIN measures m ON m.study_id = s.id
      LEFT JOIN score_sheets sh ON sh.classroom_id = c.id AND sh.wave_id = w.id AND sh.measure_id = m.id
     WHERE coalesce(sh.state, 'open') IN ('open', 'returned') AND w.closes_on < current_date AND s.status <> 'archived'
     GROUP BY s.id, s.title`,
  sites_to_enrol: `
    SELECT s.id AS study_id, s.title, 1 AS n FROM studies s
     WHERE s.status <> 'archived' AND NOT EXISTS (SELECT 1 FROM study_sites x WHERE x.study_id = s.id)`,
  draw_to_run: `
    SELECT s.id AS study_id, s.title, 1 AS n FROM studies s
     WHERE s.status <> 'archived' AND EXISTS (SELECT 1 FROM plan_versions p WHERE p.study_id = s.id)
       AND NOT EXISTS (SELECT 1 FROM draws d WHERE d.study_id = s.id AND d.committed_at IS NOT NULL)
       AND (SELECT count(*) FROM classrooms c WHERE c.study_id = s.id) >= 2`,
  plan_to_seal: `
    SELECT s.id AS study_id, s.title, 1 AS n FROM studies s
     WHERE s.status <> 'archived' AND NOT EXISTS (SELECT 1 FROM plan_versions p WHERE p.study_id = s.id)`,
  runs_to_lock: `
    SELECT s.id AS study_id, s.title, count(DISTINCT k.id)::int AS n
      FROM comparisons k JOIN studies s ON s.id = k.study_id JOIN runs r ON r.comparison_id = k.id
     WHERE k.prespecified AND r.kind = 'confirmatory' AND r.state = 'finished' AND s.status <> 'archived'
       AND NOT EXISTS (SELECT 1 FROM runs l WHERE l.comparison_id = k.id AND l.state = 'locked')
     GROUP BY s.id, s.title`,
  undeliverable_digests: `
    SELECT s.id AS study_id, s.title, count(*)::int AS n FROM digests d JOIN studies s ON s.id = d.study_id
     WHERE d.state = 'undeliverable' AND s.status <> 'archived' GROUP BY s.id, s.title`,
  results_to_read: `
    SELECT s.id AS study_id, s.title, count(*)::int AS n FROM runs r JOIN studies s ON s.id = r.study_id
     WHERE r.state = 'locked' AND s.status <> 'archived' GROUP BY s.id, s.title`,
  invitations_pending: `
    SELECT NULL AS study_id, NULL AS title, count(*)::int AS n FROM users WHERE active AND password_hash IS NULL HAVING count(*) > 0`,
  accounts_without_role: `
    SELECT NULL AS study_id, NULL AS title, count(*)::int AS n FROM users u
     WHERE u.active AND NOT EXISTS (SELECT 1 FROM role_grants g WHERE g.user_id = u.id) HAVING count(*) > 0`,
};

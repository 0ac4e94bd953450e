import type { EntityManager } from 'typeorm';
import type { Arm } from '@evenhand/entities';

// The draw's named SQL and the rows it answers (DEVELOPERS.md, "Data access").

export interface UnitRow {
  classroom_id: string;
  classroom_name: string;
  site_id: string;
  site_name: string;
  expected_size: number;
}

/** A study's classrooms with their sites, by site and classroom name: the units and blocks of the draw. */
export function drawUnits(manager: EntityManager, studyId: string): Promise<UnitRow[]> {
  return manager.query(
    `SELECT c.id AS classroom_id, c.name AS classroom_name, s.id AS site_id, s.name AS site_name, c.expected_size
       FROM classrooms c JOIN sites s ON s.id = c.site_id WHERE c.study_id = $1 ORDER BY s.name, c.name`,
    [studyId],
  );
}

export interface ReassignmentRow {
  id: string;
  classroomId: string;
  fromArm: Arm;
  arm: Arm;
  reason: string;
  by: string;
  at: Date;
  by_name: string;
}

/** A draw's manual reassignments in the order they were made, each with who made it. */
export function reassignmentRows(manager: EntityManager, drawId: string): Promise<ReassignmentRow[]> {
  return manager.query(
    `SELECT r.id, r.classroom_id AS "classroomId", r.from_arm AS "fromArm", r.to_arm AS arm, r.reason, r.by_user AS by, r.at, u.name AS by_name
       FROM draw_reassignments r JOIN users u ON u.id = r.by_user WHERE r.draw_id = $1 ORDER BY r.at`,
    [drawId],
  );
}

export interface LockedReadRow {
  id: string;
  label: string;
  locked_at: Date;
  read: boolean;
  quasi: boolean;
}

/** A study's locked results, oldest first, each saying whether it read the classroom and whether the study is quasi-experimental. */
export function lockedResultsReading(manager: EntityManager, studyId: string, classroomId: string): Promise<LockedReadRow[]> {
  return manager.query(
    `SELECT r.id, k.label, r.locked_at, (r.classroom_arms ->> $2) IS NOT NULL AS read, s.quasi_experimental AS quasi
       FROM runs r JOIN comparisons k ON k.id = r.comparison_id JOIN studies s ON s.id = r.study_id
      WHERE r.study_id = $1 AND r.state = 'locked' ORDER BY r.locked_at`,
    [studyId, classroomId],
  );
}

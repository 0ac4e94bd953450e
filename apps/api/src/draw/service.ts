import { randomBytes } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import { blockedDraw } from '@evenhand/stats';
import type { Arm, BalanceRow, Draw, DrawRequest, Reassignment, SessionUser } from '@evenhand/entities';
import { ClassroomEntity, DrawEntity, DrawReassignmentEntity, PlanVersionEntity, StudyEntity, UserEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import { AppError } from '../errors.js';
import { findVisibleStudy } from '../studies/access.js';
import { advanceStatus } from '../studies/service.js';
import { drawUnits, lockedResultsReading, reassignmentRows, type UnitRow } from './queries.js';

interface DrawDesign {
  unit: 'classroom' | 'school';
  blocks: { blockId: string; unitIds: string[] }[];
  classrooms: UnitRow[];
  names: Map<string, string>;
}

/** Classrooms are drawn within their site (the block); whole schools are drawn in one district block. */
async function design(manager: EntityManager, study: StudyEntity): Promise<DrawDesign> {
  if (study.unitOfAssignment === 'student') {
    throw AppError.conflict('Student-level assignment needs class rosters, which Evenhand does not hold; assign classrooms or schools');
  }
  const classrooms = await drawUnits(manager, study.id);
  const names = new Map<string, string>();
  const bySite = new Map<string, string[]>();
  for (const c of classrooms) {
    names.set(c.classroom_id, `${c.classroom_name} (${c.site_name})`);
    names.set(c.site_id, c.site_name);
    bySite.set(c.site_id, [...(bySite.get(c.site_id) ?? []), c.classroom_id]);
  }
  if (study.unitOfAssignment === 'school') {
    const sites = [...bySite.keys()];
    if (sites.length < 2) throw AppError.conflict('A draw of schools needs at least two enrolled sites with classrooms');
    return { unit: 'school', blocks: [{ blockId: 'district', unitIds: sites }], classrooms, names };
  }
  if (classrooms.length < 2) throw AppError.conflict('A draw needs at least two classrooms');
  return { unit: 'classroom', blocks: [...bySite].map(([blockId, unitIds]) => ({ blockId, unitIds })), classrooms, names };
}

function balance(d: DrawDesign, armOf: (c: UnitRow) => Arm | null): BalanceRow[] {
  const rows = new Map<string, BalanceRow>();
  for (const c of d.classrooms) {
    const row = rows.get(c.site_id) ?? {
      siteId: c.site_id,
      siteName: c.site_name,
      intervention: { units: 0, expectedStudents: 0 },
      comparison: { units: 0, expectedStudents: 0 },
    };
    const arm = armOf(c);
    if (arm) {
      // For school assignment the unit is the site: count it once.
      if (d.unit === 'classroom' || row[arm].units === 0) row[arm].units += 1;
      row[arm].expectedStudents += c.expected_size;
    }
    rows.set(c.site_id, row);
  }
  return [...rows.values()];
}

function run(seed: string, blocks: DrawDesign['blocks']) {
  return blockedDraw({ seed, blocks, arms: ['intervention', 'comparison'] });
}

const sameAssignments = (a: { unitId: string; arm: string }[], b: { unitId: string; arm: string }[]) =>
  a.length === b.length && a.every((x, i) => x.unitId === b[i].unitId && x.arm === b[i].arm);

async function refuseUnlessSealed(manager: EntityManager, studyId: string) {
  if (!(await manager.existsBy(PlanVersionEntity, { studyId }))) throw AppError.conflict('Seal the plan before the draw');
}

/** Previews the assignment (nothing stored) or commits it; a committed draw can never change. */
export async function drawAssignment(db: DataSource, user: SessionUser, studyId: string, input: DrawRequest): Promise<Draw> {
  return db.transaction(async (manager) => {
    const study = await findVisibleStudy(manager, user, studyId, true);
    await refuseUnlessSealed(manager, studyId);
    if (await manager.existsBy(DrawEntity, { studyId })) throw AppError.conflict('The draw for this study is already committed');
    const d = await design(manager, study);
    const seed = input.seed ?? randomBytes(16).toString('hex');
    const result = run(seed, d.blocks);
    const armOfUnit = new Map(result.assignments.map((a) => [a.unitId, a.arm as Arm]));
    const armOf = (c: UnitRow) => armOfUnit.get(d.unit === 'school' ? c.site_id : c.classroom_id) ?? null;
    const draw: Draw = {
      id: null,
      studyId,
      committed: false,
      seed,
      algorithm: result.algorithm,
      algorithmVersion: result.version,
      unit: d.unit,
      blocks: d.blocks,
      assignments: result.assignments.map((a) => ({ blockId: a.blockId, unitId: a.unitId, unitName: d.names.get(a.unitId) ?? a.unitId, arm: a.arm as Arm })),
      balance: balance(d, armOf),
      committedAt: null,
      committedBy: null,
      verified: true,
      reassignments: [],
    };
    if (!input.commit) return draw;

    const saved = await manager.save(
      manager.create(DrawEntity, {
        studyId,
        seed,
        algorithm: result.algorithm,
        algorithmVersion: result.version,
        unit: d.unit,
        blocks: d.blocks,
        assignments: result.assignments.map(({ blockId, unitId, arm }) => ({ blockId, unitId, arm: arm as Arm })),
        committedBy: user.id,
      }),
    );
    for (const c of d.classrooms) await manager.update(ClassroomEntity, c.classroom_id, { arm: armOf(c) });
    await recordAudit(manager, {
      actorId: user.id,
      studyId,
      action: 'draw.committed',
      entityType: 'draw',
      entityId: saved.id,
      after: { seed, algorithm: result.algorithm, version: result.version, assignments: saved.assignments },
    });
    // Classrooms know their arms: the study collects from here on.
    await advanceStatus(manager, studyId, 'collecting', user.id);
    return { ...draw, id: saved.id, committed: true, committedAt: saved.committedAt.toISOString(), committedBy: { id: user.id, name: user.name } };
  });
}

/** The committed draw, re-derived from its seed on every read so anyone can see it is what the seed gives; null before it is committed. */
export async function readDraw(db: DataSource, user: SessionUser, studyId: string): Promise<Draw | null> {
  const study = await findVisibleStudy(db.manager, user, studyId);
  const saved = await db.manager.findOneBy(DrawEntity, { studyId });
  if (!saved) return null;
  const d = await design(db.manager, study);
  const names = d.names;
  const rederived = run(saved.seed, saved.blocks);
  const reassignments = await reassignmentRows(db.manager, saved.id);
  const committedBy = await db.manager.findOne(UserEntity, { where: { id: saved.committedBy }, select: { id: true, name: true } });
  const currentArm = new Map(
    (await db.manager.findBy(ClassroomEntity, { studyId })).map((c) => [c.id, c.arm]),
  );
  const draw: Draw = {
    id: saved.id,
    studyId,
    committed: true,
    seed: saved.seed,
    algorithm: saved.algorithm,
    algorithmVersion: saved.algorithmVersion,
    unit: saved.unit,
    blocks: saved.blocks,
    assignments: saved.assignments.map((a) => ({ ...a, unitName: names.get(a.unitId) ?? a.unitId })),
    balance: balance(d, (c) => currentArm.get(c.classroom_id) ?? null),
    committedAt: saved.committedAt.toISOString(),
    committedBy: { id: saved.committedBy, name: committedBy?.name ?? '(unknown)' },
    verified: rederived.algorithm === saved.algorithm && rederived.version === saved.algorithmVersion && sameAssignments(rederived.assignments, saved.assignments),
    reassignments: reassignments.map((r) => ({
      id: r.id,
      classroomId: r.classroomId,
      arm: r.arm,
      fromArm: r.fromArm,
      reason: r.reason,
      by: { id: r.by, name: r.by_name },
      at: new Date(r.at).toISOString(),
    })),
  };
  return draw;
}

/**
 * A locked result keeps the allocation it was computed on: a classroom it read cannot change arms, and a randomised
 * study with a locked result cannot turn quasi-experimental (the database refuses both too).
 */
async function refuseIfLockedResultReads(manager: EntityManager, studyId: string, classroomId: string): Promise<void> {
  const locked = await lockedResultsReading(manager, studyId, classroomId);
  const hit = locked.find((r) => r.read) ?? (locked[0] && !locked[0].quasi ? locked[0] : undefined);
  if (!hit) return;
  const day = new Date(hit.locked_at).toISOString().slice(0, 10);
  throw AppError.conflict(
    hit.read
      ? `The locked result “${hit.label}” (locked ${day}) read this classroom in its arm; a reassignment would change a locked result`
      : `The locked result “${hit.label}” (locked ${day}) is a randomised comparison; a reassignment would make the study quasi-experimental`,
    { lockedRunId: hit.id },
  );
}

/** A manual change of one classroom's arm: needs a reason, is audited, and makes the study quasi-experimental. */
export async function reassign(db: DataSource, user: SessionUser, studyId: string, input: Reassignment): Promise<Draw> {
  await db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    const saved = await manager.findOneBy(DrawEntity, { studyId });
    if (!saved) throw AppError.conflict('The study has no committed draw yet; commit the draw before reassigning a classroom');
    const classroom = await manager.findOneBy(ClassroomEntity, { id: input.classroomId, studyId: studyId });
    if (!classroom) throw AppError.validation('Choose a classroom of this study', [{ path: 'classroomId', message: 'Not a classroom of this study' }]);
    if (classroom.arm === input.arm) throw AppError.validation(`This classroom is already in the ${input.arm} arm`, [{ path: 'arm', message: 'No change' }]);
    await refuseIfLockedResultReads(manager, studyId, classroom.id);
    await manager.insert(DrawReassignmentEntity, { drawId: saved.id, classroomId: classroom.id, fromArm: classroom.arm!, arm: input.arm, reason: input.reason, by: user.id });
    await manager.update(ClassroomEntity, classroom.id, { arm: input.arm });
    await manager.update(StudyEntity, studyId, { quasiExperimental: true });
    await recordAudit(manager, {
      actorId: user.id,
      studyId: studyId,
      action: 'draw.reassigned',
      entityType: 'classroom',
      entityId: classroom.id,
      before: { arm: classroom.arm },
      after: { arm: input.arm, reason: input.reason },
    });
  });
  return (await readDraw(db, user, studyId))!;
}

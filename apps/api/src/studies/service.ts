import type { CreateStudy, SessionUser, Study, StudyStatus, UpdateStudy } from '@evenhand/entities';
import { PlanVersionEntity, StudyEntity } from '@evenhand/entities/orm';
import type { DataSource, EntityManager } from 'typeorm';
import { recordAudit } from '../audit/service.js';
import { AppError } from '../errors.js';
import { findVisibleStudy, studyScope } from './access.js';

/** A studies row with its summary columns, as PostgreSQL names them. */
interface StudyRow {
  id: string;
  title: string;
  intervention: string;
  comparison_condition: string;
  unit_of_assignment: Study['unitOfAssignment'];
  status: StudyStatus;
  quasi_experimental: boolean;
  created_at: Date;
  plan_version: number | null;
  sealed_at: Date | null;
  draw_committed_at: Date | null;
  sites: number;
  classrooms: number;
  measures: number;
  waves: number;
}

const summaryColumns = `
  (SELECT max(version) FROM plan_versions pv WHERE pv.study_id = s.id) AS plan_version,
  (SELECT created_at FROM plan_versions pv WHERE pv.study_id = s.id AND version = 1) AS sealed_at,
  (SELECT committed_at FROM draws d WHERE d.study_id = s.id) AS draw_committed_at,
  (SELECT count(*)::int FROM study_sites x WHERE x.study_id = s.id) AS sites,
  (SELECT count(*)::int FROM classrooms x WHERE x.study_id = s.id) AS classrooms,
  (SELECT count(*)::int FROM measures x WHERE x.study_id = s.id) AS measures,
  (SELECT count(*)::int FROM waves x WHERE x.study_id = s.id) AS waves`;

function toStudy(r: StudyRow): Study {
  return {
    id: r.id,
    title: r.title,
    intervention: r.intervention,
    comparisonCondition: r.comparison_condition,
    unitOfAssignment: r.unit_of_assignment,
    status: r.status,
    quasiExperimental: r.quasi_experimental,
    planVersion: r.plan_version,
    sealedAt: r.sealed_at ? new Date(r.sealed_at).toISOString() : null,
    drawCommittedAt: r.draw_committed_at ? new Date(r.draw_committed_at).toISOString() : null,
    counts: { sites: r.sites, classrooms: r.classrooms, measures: r.measures, waves: r.waves },
    createdAt: new Date(r.created_at).toISOString(),
  };
}

async function querySummaries(manager: EntityManager, user: SessionUser, filter: { id?: string; status?: StudyStatus }, page?: { limit: number; offset: number }) {
  const scope = studyScope(user);
  const qb = manager
    .createQueryBuilder()
    .select(`s.*, ${summaryColumns}`)
    .from('studies', 's')
    .where(scope.where, scope.params)
    .orderBy('s.created_at', 'DESC');
  if (filter.id) qb.andWhere('s.id = :id', { id: filter.id });
  if (filter.status) qb.andWhere('s.status = :status', { status: filter.status });
  const total = await qb.getCount();
  if (page) qb.limit(page.limit).offset(page.offset);
  const rows = await qb.getRawMany<StudyRow>();
  return { items: rows.map(toStudy), total };
}

export async function listStudies(db: DataSource, user: SessionUser, query: { limit: number; offset: number; status?: StudyStatus }) {
  return querySummaries(db.manager, user, { status: query.status }, query);
}

export async function getStudy(manager: EntityManager, user: SessionUser, id: string): Promise<Study> {
  const { items } = await querySummaries(manager, user, { id });
  if (!items.length) throw AppError.notFound('The study');
  return items[0];
}

export async function createStudy(db: DataSource, user: SessionUser, input: CreateStudy): Promise<Study> {
  return db.transaction(async (manager) => {
    const study = await manager.save(manager.create(StudyEntity, { ...input, status: 'drafting', createdBy: user.id }));
    await recordAudit(manager, { actorId: user.id, studyId: study.id, action: 'study.created', entityType: 'study', entityId: study.id, after: input });
    return getStudy(manager, user, study.id);
  });
}

export async function updateStudy(db: DataSource, user: SessionUser, id: string, input: UpdateStudy): Promise<Study> {
  return db.transaction(async (manager) => {
    const study = await findVisibleStudy(manager, user, id, true);
    const { archived, ...fields } = input;
    const sealed = await manager.existsBy(PlanVersionEntity, { studyId: id });
    if (sealed && (fields.unitOfAssignment || fields.intervention || fields.comparisonCondition)) {
      // These are part of what was pre-registered.
      throw AppError.conflict('The plan is sealed: the intervention, comparison and unit of assignment can no longer change');
    }
    const before = { title: study.title, intervention: study.intervention, comparisonCondition: study.comparisonCondition, unitOfAssignment: study.unitOfAssignment, status: study.status };
    const status: StudyStatus | undefined = archived === true ? 'archived' : undefined;
    if (archived === false) throw AppError.validation('An archived study cannot be reopened');
    await manager.update(StudyEntity, id, { ...fields, ...(status ? { status } : {}) });
    await recordAudit(manager, { actorId: user.id, studyId: id, action: 'study.updated', entityType: 'study', entityId: id, before, after: input });
    return getStudy(manager, user, id);
  });
}

/**
 * Moves a study forward through its states, never back, inside the caller's transaction; a move is audited with the
 * state it left. Answers whether it moved.
 */
export async function advanceStatus(manager: EntityManager, studyId: string, to: StudyStatus, actorId: string | null): Promise<boolean> {
  const order: StudyStatus[] = ['drafting', 'registered', 'enrolling', 'collecting', 'analysing', 'reported', 'archived'];
  const lower = order.slice(0, order.indexOf(to));
  const row = await manager.findOne(StudyEntity, { where: { id: studyId }, select: { id: true, status: true }, lock: { mode: 'pessimistic_write' } });
  if (!row || !lower.includes(row.status)) return false;
  await manager.update(StudyEntity, studyId, { status: to });
  await recordAudit(manager, { actorId, studyId, action: 'study.status_changed', entityType: 'study', entityId: studyId, before: { status: row.status }, after: { status: to } });
  return true;
}

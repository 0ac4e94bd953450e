import type { DataSource, EntityManager } from 'typeorm';
import { planContentSchema, type Amendment, type Plan, type PlanContent, type PlanFieldChange, type PlanVersion, type SessionUser } from '@evenhand/entities';
import { MeasureEntity, PlanDraftEntity, PlanVersionEntity, StudyEntity, UserEntity, WaveEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import { AppError } from '../errors.js';
import { canonicalSha256 } from '../lib/canonical.js';
import { findVisibleStudy, hasRole } from '../studies/access.js';
import { advanceStatus } from '../studies/service.js';

/** Field-by-field differences between two plan versions, in the schema's field order. */
export function planChanges(before: PlanContent, after: PlanContent): PlanFieldChange[] {
  return (Object.keys(after) as (keyof PlanContent)[])
    .filter((k) => JSON.stringify(before[k]) !== JSON.stringify(after[k]))
    .map((field) => ({ field, from: before[field] ?? null, to: after[field] }));
}

async function assertReferencesBelong(manager: EntityManager, studyId: string, plan: PlanContent) {
  const issues = [];
  if (!(await manager.existsBy(MeasureEntity, { id: plan.primaryMeasureId, studyId }))) {
    issues.push({ path: 'primaryMeasureId', message: 'Choose one of this study’s measures' });
  }
  const wave = await manager.findOneBy(WaveEntity, { id: plan.primaryWaveId, studyId });
  if (!wave) issues.push({ path: 'primaryWaveId', message: 'Choose one of this study’s waves' });
  else if (wave.kind === 'baseline') issues.push({ path: 'primaryWaveId', message: 'The primary outcome is measured after baseline' });
  if (plan.covariate === 'baseline' && !(await manager.existsBy(WaveEntity, { studyId, kind: 'baseline' }))) {
    issues.push({ path: 'covariate', message: 'Add a baseline wave to adjust for the baseline score' });
  }
  if (plan.primaryTest === 'two-level' && (await manager.findOneBy(StudyEntity, { id: studyId }))?.unitOfAssignment === 'student') {
    issues.push({ path: 'primaryTest', message: 'The two-level model nests students in assigned classrooms or schools; this study assigns students, so use a t test' });
  }
  if (issues.length) throw AppError.validation('The plan refers to things that are not part of this study', issues);
}

async function versions(manager: EntityManager, studyId: string): Promise<PlanVersion[]> {
  const rows = await manager
    .createQueryBuilder(PlanVersionEntity, 'v')
    .leftJoinAndMapOne('v.author', UserEntity, 'u', 'u.id = v.created_by')
    .where('v.study_id = :studyId', { studyId })
    .orderBy('v.version', 'ASC')
    .getMany();
  return rows.map((v) => {
    const author = (v as PlanVersionEntity & { author?: UserEntity }).author;
    return {
      version: v.version,
      content: v.content,
      sha256: v.sha256,
      createdAt: v.createdAt.toISOString(),
      createdBy: { id: v.createdBy, name: author?.name ?? '(unknown)' },
      reason: v.reason,
      changes: v.changes,
    };
  });
}

export async function getPlan(db: DataSource, user: SessionUser, studyId: string): Promise<Plan> {
  await findVisibleStudy(db.manager, user, studyId);
  const all = await versions(db.manager, studyId);
  // Reviewers read what was registered, not the lead's working draft.
  const draft = all.length || !hasRole(user, 'research_lead', 'coordinator') ? null : await db.manager.findOneBy(PlanDraftEntity, { studyId });
  return { studyId, sealed: all.length > 0, draft: draft?.content ?? null, versions: all };
}

export async function saveDraft(db: DataSource, user: SessionUser, studyId: string, plan: PlanContent): Promise<Plan> {
  await db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    if (await manager.existsBy(PlanVersionEntity, { studyId })) {
      throw AppError.conflict('The plan is sealed; change it with an amendment');
    }
    await assertReferencesBelong(manager, studyId, plan);
    await manager.upsert(PlanDraftEntity, { studyId, content: plan, updatedBy: user.id }, ['studyId']);
    await recordAudit(manager, { actorId: user.id, studyId, action: 'plan.draft_saved', entityType: 'plan', entityId: studyId, after: plan });
  });
  return getPlan(db, user, studyId);
}

/** Freezes the draft as version 1 with the SHA-256 of its canonical JSON; the study becomes registered. */
export async function sealPlan(db: DataSource, user: SessionUser, studyId: string): Promise<Plan> {
  await db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    if (await manager.existsBy(PlanVersionEntity, { studyId })) throw AppError.conflict('The plan is already sealed');
    const draft = await manager.findOneBy(PlanDraftEntity, { studyId });
    if (!draft) throw AppError.conflict('Save a complete plan before sealing it');
    await assertReferencesBelong(manager, studyId, draft.content);
    const sha256 = canonicalSha256(draft.content);
    await manager.insert(PlanVersionEntity, { studyId, version: 1, content: draft.content, sha256, reason: null, changes: [], createdBy: user.id });
    await manager.delete(PlanDraftEntity, { studyId });
    await advanceStatus(manager, studyId, 'registered', user.id);
    await recordAudit(manager, { actorId: user.id, studyId, action: 'plan.sealed', entityType: 'plan', entityId: studyId, after: { version: 1, sha256 } });
  });
  return getPlan(db, user, studyId);
}

export async function amendPlan(db: DataSource, user: SessionUser, studyId: string, amendment: Amendment): Promise<Plan> {
  await db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    const latest = await manager.findOne(PlanVersionEntity, { where: { studyId }, order: { version: 'DESC' } });
    if (!latest) throw AppError.conflict('The plan is not sealed yet; edit the draft instead');
    await assertReferencesBelong(manager, studyId, amendment.plan);
    // A version sealed before a field existed means that field's default (a boundary: cautious), so restating it is no change.
    const before = planContentSchema.safeParse(latest.content);
    const changes = planChanges(before.success ? before.data : latest.content, amendment.plan);
    if (!changes.length) throw AppError.validation('The amendment changes nothing in the plan');
    const version = latest.version + 1;
    const sha256 = canonicalSha256(amendment.plan);
    await manager.save(PlanVersionEntity, { studyId, version, content: amendment.plan, sha256, reason: amendment.reason, changes, createdBy: user.id });
    await recordAudit(manager, {
      actorId: user.id,
      studyId,
      action: 'plan.amended',
      entityType: 'plan',
      entityId: studyId,
      before: { version: latest.version },
      after: { version, sha256, reason: amendment.reason, changes },
    });
  });
  return getPlan(db, user, studyId);
}

/** The plan now in force (the latest sealed version), or null before sealing. */
export async function currentPlan(manager: EntityManager, studyId: string): Promise<PlanVersionEntity | null> {
  return manager.findOne(PlanVersionEntity, { where: { studyId }, order: { version: 'DESC' } });
}

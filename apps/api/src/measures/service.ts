import type { DataSource } from 'typeorm';
import { createMeasureSchema, type CreateMeasureInput, type CreateWave, type Measure, type SessionUser, type Wave } from '@evenhand/entities';
import { MeasureEntity, PlanVersionEntity, WaveEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import { AppError } from '../errors.js';
import { findVisibleStudy } from '../studies/access.js';

const toMeasure = (m: MeasureEntity): Measure => ({
  id: m.id,
  studyId: m.studyId,
  name: m.name,
  scale: m.scale,
  minScore: m.minScore,
  maxScore: m.maxScore,
  higherIsBetter: m.higherIsBetter,
  kind: m.kind,
});
const toWave = (w: WaveEntity): Wave => ({ id: w.id, studyId: w.studyId, kind: w.kind, name: w.name, opensOn: w.opensOn, closesOn: w.closesOn });

const isUniqueViolation = (err: unknown) => (err as { code?: string }).code === '23505';

export async function listMeasures(db: DataSource, user: SessionUser, studyId: string) {
  await findVisibleStudy(db.manager, user, studyId);
  const rows = await db.getRepository(MeasureEntity).find({ where: { studyId }, order: { createdAt: 'ASC' } });
  return { items: rows.map(toMeasure), total: rows.length };
}

/** Adds a measure; a yes/no one is stored with the range 0–1 (the seed passes what the route would accept). */
export async function createMeasure(db: DataSource, user: SessionUser, studyId: string, given: CreateMeasureInput): Promise<Measure> {
  const input = createMeasureSchema.parse(given);
  return db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    // Measures are part of what the sealed plan registered.
    if (await manager.existsBy(PlanVersionEntity, { studyId })) throw AppError.conflict('The plan is sealed; measures can no longer be added');
    try {
      const m = await manager.save(manager.create(MeasureEntity, { ...input, studyId }));
      await recordAudit(manager, { actorId: user.id, studyId, action: 'measure.created', entityType: 'measure', entityId: m.id, after: input });
      return toMeasure(m);
    } catch (err) {
      if (isUniqueViolation(err)) throw AppError.conflict(`This study already has a measure named “${input.name}”`);
      throw err;
    }
  });
}

export async function listWaves(db: DataSource, user: SessionUser, studyId: string) {
  await findVisibleStudy(db.manager, user, studyId);
  const rows = await db.getRepository(WaveEntity).find({ where: { studyId }, order: { opensOn: 'ASC' } });
  return { items: rows.map(toWave), total: rows.length };
}

export async function createWave(db: DataSource, user: SessionUser, studyId: string, input: CreateWave): Promise<Wave> {
  return db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    if (input.kind !== 'follow-up' && (await manager.existsBy(WaveEntity, { studyId, kind: input.kind }))) {
      throw AppError.conflict(`This study already has a ${input.kind} wave`);
    }
    try {
      const w = await manager.save(manager.create(WaveEntity, { ...input, studyId }));
      await recordAudit(manager, { actorId: user.id, studyId, action: 'wave.created', entityType: 'wave', entityId: w.id, after: input });
      return toWave(w);
    } catch (err) {
      if (isUniqueViolation(err)) throw AppError.conflict(`This study already has a wave named “${input.name}”`);
      throw err;
    }
  });
}

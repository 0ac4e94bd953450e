// Server only: TypeORM entities. The schema itself is owned by the API's migrations.
import 'reflect-metadata';
import { AuditEventEntity } from './audit-event.entity.js';
import { AuthTokenEntity } from './auth-token.entity.js';
import { ClassroomEntity, CohortEntity, StudySiteEntity } from './classroom.entity.js';
import { DrawEntity, DrawReassignmentEntity } from './draw.entity.js';
import { MeasureEntity } from './measure.entity.js';
import { PlanDraftEntity, PlanVersionEntity } from './plan.entity.js';
import { RoleGrantEntity } from './role-grant.entity.js';
import { ScoreSheetEntity } from './score-sheet.entity.js';
import { SiteEntity } from './site.entity.js';
import { StudyEntity } from './study.entity.js';
import { UserEntity } from './user.entity.js';
import { WaveEntity } from './wave.entity.js';

export {
  AuditEventEntity,
  AuthTokenEntity,
  ClassroomEntity,
  CohortEntity,
  DrawEntity,
  DrawReassignmentEntity,
  MeasureEntity,
  PlanDraftEntity,
  PlanVersionEntity,
  RoleGrantEntity,
  ScoreSheetEntity,
  SiteEntity,
  StudyEntity,
  StudySiteEntity,
  UserEntity,
  WaveEntity,
};
export type { AuthTokenKind } from './auth-token.entity.js';

export const entities = [
  UserEntity,
  RoleGrantEntity,
  AuthTokenEntity,
  AuditEventEntity,
  SiteEntity,
  StudyEntity,
  MeasureEntity,
  WaveEntity,
  PlanDraftEntity,
  PlanVersionEntity,
  StudySiteEntity,
  CohortEntity,
  ClassroomEntity,
  DrawEntity,
  DrawReassignmentEntity,
  ScoreSheetEntity,
];

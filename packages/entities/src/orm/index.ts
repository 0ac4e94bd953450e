// Server only: TypeORM entities. The schema itself is owned by the API's migrations.
import 'reflect-metadata';
import { AuditEventEntity } from './audit-event.entity.js';
import { AuthTokenEntity } from './auth-token.entity.js';
import { RoleGrantEntity } from './role-grant.entity.js';
import { SiteEntity } from './site.entity.js';
import { UserEntity } from './user.entity.js';

export { AuditEventEntity, AuthTokenEntity, RoleGrantEntity, SiteEntity, UserEntity };
export type { AuthTokenKind } from './auth-token.entity.js';

export const entities = [UserEntity, RoleGrantEntity, AuthTokenEntity, AuditEventEntity, SiteEntity];

import { In, type EntityManager } from 'typeorm';
import type { InviteAccount, RoleGrant, SessionUser, UpdateAccount, Account, AccountsQuery } from '@evenhand/entities';
import { RoleGrantEntity, SiteEntity, UserEntity } from '@evenhand/entities/orm';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { recordAudit } from '../audit/service.js';
import { accountPage } from './queries.js';
import { endSessions, issueToken, queueInvitation, sessionChanging } from '../auth/service.js';

function toAccount(u: UserEntity): Account {
  return {
    id: u.id,
    email: u.email,
    name: u.name,
    active: u.active,
    invitationPending: u.passwordHash === null,
    roles: (u.grants ?? []).map((g) => ({ role: g.role, siteId: g.siteId })).sort(byGrant),
    createdAt: u.createdAt.toISOString(),
    lastSignInAt: u.lastSignInAt?.toISOString() ?? null,
  };
}

const byGrant = (a: RoleGrant, b: RoleGrant) => `${a.role}:${a.siteId ?? ''}`.localeCompare(`${b.role}:${b.siteId ?? ''}`);

export async function listAccounts({ db }: Deps, query: AccountsQuery): Promise<{ items: Account[]; total: number }> {
  const { total, ids } = await accountPage(db.manager, query);
  const found = ids.length ? await db.manager.find(UserEntity, { where: { id: In(ids) }, relations: { grants: true } }) : [];
  const byId = new Map(found.map((u) => [u.id, u]));
  return { items: ids.map((id) => toAccount(byId.get(id)!)), total };
}

async function assertSitesExist(manager: EntityManager, grants: RoleGrant[]) {
  const ids = [...new Set(grants.map((g) => g.siteId).filter((id): id is string => !!id))];
  if (!ids.length) return;
  const found = await manager.countBy(SiteEntity, { id: In(ids) });
  if (found !== ids.length) throw AppError.validation('A role grant names a site that does not exist');
}

async function replaceGrants(manager: EntityManager, userId: string, grants: RoleGrant[]) {
  await manager.delete(RoleGrantEntity, { userId });
  if (grants.length) await manager.insert(RoleGrantEntity, grants.map((g) => ({ userId, role: g.role, siteId: g.siteId })));
}

/** Creates the account without a password and e-mails a set-password link. */
export async function inviteAccount(deps: Deps, actor: SessionUser, input: InviteAccount): Promise<Account> {
  const user = await deps.db.transaction(async (manager) => {
    if (await manager.existsBy(UserEntity, { email: input.email })) {
      throw AppError.conflict('An account with this e-mail address already exists', { issues: [{ path: 'email', message: 'This address already has an account' }] });
    }
    await assertSitesExist(manager, input.roles);
    const created = await manager.save(manager.create(UserEntity, { email: input.email, name: input.name, passwordHash: null, active: true }));
    await replaceGrants(manager, created.id, input.roles);
    const token = await issueToken(manager, created.id, 'invitation');
    await queueInvitation(manager, deps, { userId: created.id, email: created.email, name: created.name, token, invitedBy: actor });
    await recordAudit(manager, {
      actorId: actor.id,
      action: 'user.invited',
      entityType: 'user',
      entityId: created.id,
      after: { email: input.email, name: input.name, roles: input.roles },
    });
    created.grants = await manager.findBy(RoleGrantEntity, { userId: created.id });
    return created;
  });
  return toAccount(user);
}

export async function updateAccount(deps: Deps, actor: SessionUser, id: string, input: UpdateAccount): Promise<Account> {
  return deps.db.transaction(async (manager) => {
    const user = await manager.findOne(UserEntity, { where: { id }, relations: { grants: true }, lock: { mode: 'pessimistic_write', tables: ['users'] } });
    if (!user) throw AppError.notFound('The account');
    const before = toAccount(user);
    if (id === actor.id && (input.active === false || (input.roles && !input.roles.some((g) => g.role === 'admin')))) {
      throw AppError.conflict('You cannot deactivate yourself or remove your own admin role');
    }
    if (input.name !== undefined || input.active !== undefined) {
      sessionChanging(manager, id);
      await manager.update(UserEntity, id, { name: input.name ?? user.name, active: input.active ?? user.active });
    }
    if (input.roles) {
      await assertSitesExist(manager, input.roles);
      await replaceGrants(manager, id, input.roles);
    }
    const updated = await manager.findOneOrFail(UserEntity, { where: { id }, relations: { grants: true } });
    const after = toAccount(updated);
    const changes: [string, unknown, unknown][] = [
      ['user.roles_changed', before.roles, after.roles],
      ['user.activation_changed', before.active, after.active],
      ['user.renamed', before.name, after.name],
    ];
    for (const [action, was, now] of changes) {
      if (JSON.stringify(was) !== JSON.stringify(now)) {
        await recordAudit(manager, { actorId: actor.id, action, entityType: 'user', entityId: id, before: was, after: now });
      }
    }
    // New roles or a deactivation take effect at once: the account signs in again.
    if (JSON.stringify(before.roles) !== JSON.stringify(after.roles) || before.active !== after.active) await endSessions(manager, id);
    return after;
  });
}

import { createHash, randomBytes } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { roleLabels, type RoleGrant, type SessionUser } from '@evenhand/entities';
import { recordAudit } from '../audit/service.js';
import { endSessions, issueToken, queueInvitation } from '../auth/service.js';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { queueMail } from '../mail/outbox.js';
import { roleInvitationMail } from '../mail/templates.js';

/** The school roles a coordinator can offer by naming a person. */
type SchoolRole = 'teacher' | 'principal';

/**
 * Roles that cannot also teach or lead a school: a reviewer checks the study independently, and a coordinator
 * accepts the score sheets that teachers submit.
 */
const conflictingRoles = ['reviewer', 'coordinator'] as const;

const INVITATION_DAYS = 14;
const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');
const roleWord = (role: SchoolRole) => roleLabels[role].toLowerCase();

/**
 * Names a person for a school role. An existing account is offered the role by an e-mailed link and holds it only once
 * it accepts; a new address gets an account with the role but no password, usable once the person accepts the
 * invitation by choosing a password. Nobody may name
 * themselves, nor an account holding a conflicting role (409). A person who already holds the role there is simply
 * named. Everything goes into the outbox within the caller's transaction.
 */
export async function ensurePerson(
  manager: EntityManager,
  ctx: Pick<Deps, 'config' | 'jobs'>,
  actor: SessionUser,
  person: { email: string; name: string },
  offered: RoleGrant & { role: SchoolRole },
  studyId: string | null,
): Promise<{ userId: string; invited: boolean }> {
  if (!offered.siteId) throw new Error('a school role names its school');
  const grant = { role: offered.role, siteId: offered.siteId };
  const field = `${grant.role}.email`;
  const [existing]: { id: string; email: string; name: string; roles: string[]; has_role: boolean }[] = await manager.query(
    `SELECT u.id, u.email, u.name,
            ARRAY(SELECT g.role FROM role_grants g WHERE g.user_id = u.id) AS roles,
            EXISTS (SELECT 1 FROM role_grants g WHERE g.user_id = u.id AND g.role = $2 AND g.site_id = $3) AS has_role
       FROM users u WHERE u.email = $1 FOR UPDATE`,
    [person.email, grant.role, grant.siteId],
  );
  if (existing?.id === actor.id) {
    throw AppError.conflict(`You cannot name yourself as ${roleWord(grant.role)}; name the person who will do it`, { issues: [{ path: field, message: 'This is your own account' }] });
  }
  const conflict = existing?.roles.find((r) => (conflictingRoles as readonly string[]).includes(r));
  if (conflict) {
    const label = roleLabels[conflict as keyof typeof roleLabels].toLowerCase();
    throw AppError.conflict(`${existing!.email} has the ${label} role, which cannot also be a school’s ${roleWord(grant.role)}; name someone else`, {
      issues: [{ path: field, message: `This account has the ${label} role` }],
    });
  }
  if (existing?.has_role) return { userId: existing.id, invited: false };

  if (!existing) {
    // A new account: the role comes with it, unusable until the person accepts by setting a password from the e-mail.
    const [{ id: userId }] = await manager.query(`INSERT INTO users (email, name, password_hash) VALUES ($1, $2, NULL) RETURNING id`, [person.email, person.name]);
    await manager.query(`INSERT INTO role_grants (user_id, role, site_id) VALUES ($1, $2, $3)`, [userId, grant.role, grant.siteId]);
    await recordAudit(manager, { actorId: actor.id, studyId, action: 'user.invited', entityType: 'user', entityId: userId, after: { email: person.email, added: grant } });
    const setPassword = await issueToken(manager, userId, 'invitation');
    await queueInvitation(manager, ctx, { userId, email: person.email, name: person.name, token: setPassword, invitedBy: actor, studyId });
    return { userId, invited: true };
  }
  const userId = existing.id;
  const token = randomBytes(32).toString('base64url');
  // A newer offer of the same role replaces an open one (only the newest link works).
  await manager.query(`UPDATE role_invitations SET state = 'withdrawn', decided_at = now() WHERE user_id = $1 AND role = $2 AND site_id = $3 AND state = 'pending'`, [userId, grant.role, grant.siteId]);
  await manager.query(
    `INSERT INTO role_invitations (user_id, role, site_id, invited_by, token_hash, expires_at) VALUES ($1, $2, $3, $4, $5, now() + $6 * interval '1 day')`,
    [userId, grant.role, grant.siteId, actor.id, hashToken(token), INVITATION_DAYS],
  );
  await recordAudit(manager, { actorId: actor.id, studyId, action: 'user.role_offered', entityType: 'user', entityId: userId, after: { email: person.email, offered: grant } });
  const [{ name: siteName }] = await manager.query(`SELECT name FROM sites WHERE id = $1`, [grant.siteId]);
  const link = `${ctx.config.appUrl}/invitations/accept?token=${encodeURIComponent(token)}`;
  const message = roleInvitationMail({ name: existing.name, invitedBy: actor.name, role: roleWord(grant.role), siteName, link });
  await queueMail(manager, ctx, { kind: 'role_invitation', recipient: { id: userId, email: existing.email }, message, actorId: actor.id, studyId });
  return { userId, invited: true };
}

interface OpenInvitation {
  id: string;
  user_id: string;
  role: SchoolRole;
  site_id: string;
  site_name: string;
  expired: boolean;
}

/** Grants an open invitation's role if it still stands (the person is still named, holds no conflicting role). */
async function grant(manager: EntityManager, inv: OpenInvitation): Promise<boolean> {
  const stillNamed =
    inv.role === 'teacher'
      ? (await manager.query(`SELECT 1 FROM classrooms WHERE site_id = $1 AND teacher_id = $2 LIMIT 1`, [inv.site_id, inv.user_id])).length > 0
      : (await manager.query(`SELECT 1 FROM sites WHERE id = $1 AND principal_id = $2`, [inv.site_id, inv.user_id])).length > 0;
  const [conflict] = await manager.query(`SELECT role FROM role_grants WHERE user_id = $1 AND role = ANY($2)`, [inv.user_id, conflictingRoles]);
  const stands = stillNamed && !conflict && !inv.expired;
  await manager.query(`UPDATE role_invitations SET state = $2, decided_at = now() WHERE id = $1`, [inv.id, stands ? 'accepted' : 'withdrawn']);
  if (!stands) return false;
  await manager.query(`INSERT INTO role_grants (user_id, role, site_id) VALUES ($1, $2, $3) ON CONFLICT DO NOTHING`, [inv.user_id, inv.role, inv.site_id]);
  await recordAudit(manager, { actorId: inv.user_id, action: 'user.role_accepted', entityType: 'user', entityId: inv.user_id, after: { role: inv.role, siteId: inv.site_id } });
  return true;
}

const openSelect = `SELECT i.id, i.user_id, i.role, i.site_id, s.name AS site_name, i.expires_at < now() AS expired
  FROM role_invitations i JOIN sites s ON s.id = i.site_id WHERE i.state = 'pending'`;

/** The signed-in person accepts the role offered by a link sent to them. */
export async function acceptRoleInvitation(deps: Pick<Deps, 'db'>, user: SessionUser, token: string): Promise<{ role: SchoolRole; siteId: string; siteName: string }> {
  return deps.db.transaction(async (manager) => {
    const [inv]: OpenInvitation[] = await manager.query(`${openSelect} AND i.token_hash = $1 FOR UPDATE OF i`, [hashToken(token)]);
    // Someone else's link answers as an unknown one: it says nothing about the other account.
    if (!inv || inv.user_id !== user.id) throw AppError.notFound('The invitation (it may have been used, replaced by a newer one, or sent to another account)');
    if (!(await grant(manager, inv))) {
      throw AppError.conflict(inv.expired ? 'This invitation has expired; ask the coordinator to name you again' : 'This role is no longer offered to you (someone else was named, or your account has a role that conflicts with it)');
    }
    return { role: inv.role, siteId: inv.site_id, siteName: inv.site_name };
  });
}

/** Accepts every open role invitation of an account, as its owner would by each link (test set-up only). */
export async function acceptOpenInvitations(manager: EntityManager, userId: string): Promise<void> {
  const open: OpenInvitation[] = await manager.query(`${openSelect} AND i.user_id = $1 ORDER BY i.created_at FOR UPDATE OF i`, [userId]);
  for (const inv of open) await grant(manager, inv);
}

/**
 * Someone is no longer named (another teacher for the classroom, another principal for the school): their grant for
 * that school goes once nothing there names them any more, open offers are withdrawn, and their sessions end.
 */
export async function releaseRole(manager: EntityManager, actor: SessionUser, userId: string, role: SchoolRole, siteId: string, studyId: string | null): Promise<void> {
  const named =
    role === 'teacher'
      ? (await manager.query(`SELECT 1 FROM classrooms WHERE site_id = $1 AND teacher_id = $2 LIMIT 1`, [siteId, userId])).length > 0
      : (await manager.query(`SELECT 1 FROM sites WHERE id = $1 AND principal_id = $2`, [siteId, userId])).length > 0;
  if (named) return;
  await manager.query(`UPDATE role_invitations SET state = 'withdrawn', decided_at = now() WHERE user_id = $1 AND role = $2 AND site_id = $3 AND state = 'pending'`, [userId, role, siteId]);
  const removed = await manager.query(`DELETE FROM role_grants WHERE user_id = $1 AND role = $2 AND site_id = $3 RETURNING id`, [userId, role, siteId]);
  if (!removed.length) return;
  await endSessions(manager, userId);
  await recordAudit(manager, { actorId: actor.id, studyId, action: 'user.roles_changed', entityType: 'user', entityId: userId, before: { role, siteId }, after: { removed: { role, siteId } } });
}

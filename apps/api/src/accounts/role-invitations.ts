import { createHash, randomBytes } from 'node:crypto';
import { In, type EntityManager } from 'typeorm';
import { roleLabels, type RoleGrant, type SessionUser } from '@evenhand/entities';
import { SiteEntity } from '@evenhand/entities/orm';
import { recordAudit, recordAudits } from '../audit/service.js';
import { endSessions, issueTokens, queueInvitations, sessionChanging } from '../auth/service.js';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { queueMails } from '../mail/outbox.js';
import { roleInvitationMail } from '../mail/templates.js';
import {
  grantIfAbsent,
  insertGrants,
  insertInvitedAccounts,
  insertInvitations,
  lockAccountsByEmail,
  lockOpenInvitationByToken,
  lockOpenInvitationsOf,
  openInvitationKeys,
  removeGrant,
  rolesAmong,
  settleInvitation,
  stillNamed,
  withdrawInvitations,
  type OpenInvitationRow,
} from './queries.js';

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

/** A person named for a school role at a school. */
export interface Naming {
  person: { email: string; name: string };
  offered: { role: SchoolRole; siteId: string };
}

/** A naming that cannot stand, by its place in the list: the message, and the issue for the form's field. */
export interface NamingRefusal {
  index: number;
  field: string;
  message: string;
  issue: string;
}

/** A form names one person: the first refusal answers 409 with its field's issue. */
function refuseNaming([first]: NamingRefusal[]): never {
  throw AppError.conflict(first.message, { issues: [{ path: first.field, message: first.issue }] });
}

/**
 * Names a person for a school role: `ensurePeople` for one. Nobody may name themselves, nor an account holding a
 * conflicting role (409).
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
  return (await ensurePeople(manager, ctx, actor, [{ person, offered: { role: offered.role, siteId: offered.siteId } }], studyId))[0];
}

/**
 * Names people for school roles, set-wise (a roster import names thousands), with the outcome of naming them one
 * after another. An existing account is offered the role by an e-mailed link and holds it only once it accepts; a new
 * address gets an account with the first role named for it but no password, usable once the person accepts the
 * invitation by choosing a password (any other role named for it in the same list is offered like an existing
 * account's). A person who already holds the role there is simply named, and one with an open invitation to it keeps that
 * invitation (no second e-mail); the same person, role and school named twice is one naming. If anyone named is the actor or holds a conflicting role, `refuse` throws and nothing is
 * written. Everything goes into the outbox within the caller's transaction. Answers each naming's account, and
 * whether that naming sent mail.
 */
export async function ensurePeople(
  manager: EntityManager,
  ctx: Pick<Deps, 'config' | 'jobs'>,
  actor: SessionUser,
  named: readonly Naming[],
  studyId: string | null,
  refuse: (refused: NamingRefusal[]) => never = refuseNaming,
): Promise<{ userId: string; invited: boolean }[]> {
  if (!named.length) return [];
  const found = await lockAccountsByEmail(manager, [...new Set(named.map((n) => n.person.email))]);
  const accounts = new Map(found.map((u) => [u.email, { ...u, held: new Set(u.held) }]));

  const refused: NamingRefusal[] = [];
  named.forEach(({ person, offered }, index) => {
    const account = accounts.get(person.email);
    const field = `${offered.role}.email`;
    if (account?.id === actor.id) {
      refused.push({ index, field, message: `You cannot name yourself as ${roleWord(offered.role)}; name the person who will do it`, issue: 'This is your own account' });
      return;
    }
    const conflict = account?.roles.find((r) => (conflictingRoles as readonly string[]).includes(r));
    if (conflict) {
      const label = roleLabels[conflict as keyof typeof roleLabels].toLowerCase();
      refused.push({
        index,
        field,
        message: `${account!.email} has the ${label} role, which cannot also be a school’s ${roleWord(offered.role)}; name someone else`,
        issue: `This account has the ${label} role`,
      });
    }
  });
  if (refused.length) refuse(refused);

  // New addresses: an account each, with the first role named for it; the role comes with it, unusable until the
  // person accepts by setting a password from the e-mail.
  const fresh = new Map<string, Naming>();
  for (const n of named) if (!accounts.has(n.person.email) && !fresh.has(n.person.email)) fresh.set(n.person.email, n);
  const newcomers = [...fresh.values()];
  if (newcomers.length) {
    const made = await insertInvitedAccounts(manager, newcomers.map((n) => n.person));
    for (const u of made) accounts.set(u.email, { ...u, roles: [], held: new Set([`${fresh.get(u.email)!.offered.role}@${fresh.get(u.email)!.offered.siteId}`]) });
    const ids = newcomers.map((n) => accounts.get(n.person.email)!.id);
    await insertGrants(manager, newcomers.map((n, i) => ({ userId: ids[i], role: n.offered.role, siteId: n.offered.siteId })));
    const tokens = await issueTokens(manager, ids, 'invitation');
    await recordAudits(
      manager,
      newcomers.map((n, i) => ({ actorId: actor.id, studyId, action: 'user.invited', entityType: 'user', entityId: ids[i], after: { email: n.person.email, added: n.offered } })),
    );
    await queueInvitations(
      manager,
      ctx,
      newcomers.map((n, i) => ({ userId: ids[i], email: n.person.email, name: n.person.name, token: tokens[i], invitedBy: actor, studyId })),
    );
  }

  // Everyone else not yet holding the role there: an invitation each. An invitation of the same role at the same school still
  // open stands (the link already sent keeps working, and no second e-mail goes out, e.g. for a second classroom); an
  // expired one is replaced.
  const mailed = new Set(newcomers.map((n) => `${n.person.email}|${n.offered.role}|${n.offered.siteId}`));
  const candidates = named.filter((n) => !newcomers.includes(n) && !accounts.get(n.person.email)!.held.has(`${n.offered.role}@${n.offered.siteId}`));
  const standing = await openInvitationKeys(manager, candidates.map((n) => ({ email: n.person.email, role: n.offered.role, siteId: n.offered.siteId })));
  const invitations: (Naming & { userId: string; name: string; token: string })[] = [];
  for (const n of candidates) {
    const key = `${n.person.email}|${n.offered.role}|${n.offered.siteId}`;
    if (mailed.has(key) || standing.has(key)) continue;
    const account = accounts.get(n.person.email)!;
    mailed.add(key);
    invitations.push({ ...n, userId: account.id, name: account.name, token: randomBytes(32).toString('base64url') });
  }
  if (invitations.length) {
    const grants = invitations.map((o) => ({ userId: o.userId, role: o.offered.role, siteId: o.offered.siteId }));
    await withdrawInvitations(manager, grants);
    await insertInvitations(manager, grants.map((g, i) => ({ ...g, tokenHash: hashToken(invitations[i].token) })), actor.id, INVITATION_DAYS);
    // The audit trail keeps the action's recorded name, 'user.role_offered', so old and new entries read alike.
    await recordAudits(
      manager,
      invitations.map((o) => ({ actorId: actor.id, studyId, action: 'user.role_offered', entityType: 'user', entityId: o.userId, after: { email: o.person.email, offered: o.offered } })),
    );
    const sites = await manager.findBy(SiteEntity, { id: In([...new Set(grants.map((g) => g.siteId))]) });
    const siteName = new Map(sites.map((x) => [x.id, x.name]));
    await queueMails(
      manager,
      ctx,
      invitations.map((o) => ({
        kind: 'role_invitation' as const,
        recipient: { id: o.userId, email: o.person.email },
        message: roleInvitationMail({
          name: o.name,
          invitedBy: actor.name,
          role: roleWord(o.offered.role),
          siteName: siteName.get(o.offered.siteId)!,
          link: `${ctx.config.appUrl}/invitations/accept?token=${encodeURIComponent(o.token)}`,
        }),
        actorId: actor.id,
        studyId,
      })),
    );
  }

  // Each naming's account; only the first naming of a person, role and school that sent mail counts as invited.
  const counted = new Set<string>();
  return named.map((n) => {
    const key = `${n.person.email}|${n.offered.role}|${n.offered.siteId}`;
    const invited = mailed.has(key) && !counted.has(key);
    counted.add(key);
    return { userId: accounts.get(n.person.email)!.id, invited };
  });
}

/** Grants an open invitation's role if it still stands (the person is still named, holds no conflicting role). */
async function grant(manager: EntityManager, inv: OpenInvitationRow): Promise<boolean> {
  const offered = { userId: inv.user_id, role: inv.role, siteId: inv.site_id };
  const stands = (await stillNamed(manager, offered)) && !(await rolesAmong(manager, inv.user_id, conflictingRoles)).length && !inv.expired;
  await settleInvitation(manager, inv.id, stands ? 'accepted' : 'withdrawn');
  if (!stands) return false;
  // The accepted role works in the sessions the person already has, from the next request on.
  sessionChanging(manager, inv.user_id);
  await grantIfAbsent(manager, offered);
  await recordAudit(manager, { actorId: inv.user_id, action: 'user.role_accepted', entityType: 'user', entityId: inv.user_id, after: { role: inv.role, siteId: inv.site_id } });
  return true;
}

/** The signed-in person accepts the role an invitation link sent to them offers. */
export async function acceptRoleInvitation(deps: Pick<Deps, 'db'>, user: SessionUser, token: string): Promise<{ role: SchoolRole; siteId: string; siteName: string }> {
  return deps.db.transaction(async (manager) => {
    const inv = await lockOpenInvitationByToken(manager, hashToken(token));
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
  for (const inv of await lockOpenInvitationsOf(manager, userId)) await grant(manager, inv);
}

/**
 * Someone is no longer named (another teacher for the classroom, another principal for the school): their grant for
 * that school goes once nothing there names them any more, open invitations are withdrawn, and their sessions end.
 */
export async function releaseRole(manager: EntityManager, actor: SessionUser, userId: string, role: SchoolRole, siteId: string, studyId: string | null): Promise<void> {
  const held = { userId, role, siteId };
  if (await stillNamed(manager, held)) return;
  await withdrawInvitations(manager, [held]);
  if (!(await removeGrant(manager, held))) return;
  await endSessions(manager, userId);
  await recordAudit(manager, { actorId: actor.id, studyId, action: 'user.roles_changed', entityType: 'user', entityId: userId, before: { role, siteId }, after: { removed: { role, siteId } } });
}

import type { EntityManager } from 'typeorm';
import type { AccountsQuery } from '@evenhand/entities';

// The accounts' named SQL and the rows it answers (DEVELOPERS.md, "Data access").

const sortColumn: Record<AccountsQuery['sort'], string> = {
  name: 'u.name',
  email: 'u.email',
  createdAt: 'u.created_at',
  lastSignInAt: 'u.last_sign_in_at',
};

/** The accounts matching a search (name or e-mail, letter case aside) and role: how many, and one page's IDs in order. */
export async function accountPage(manager: EntityManager, query: AccountsQuery): Promise<{ total: number; ids: string[] }> {
  // The sort column and direction come from closed lists, so they can be written into the statement.
  const order = `${sortColumn[query.sort]} ${query.order === 'asc' ? 'ASC' : 'DESC'} NULLS LAST, u.id ASC`;
  const [row]: { total: number; ids: string[] }[] = await manager.query(
    `WITH matching AS (
       SELECT u.* FROM users u
        WHERE ($1::text IS NULL OR u.name ILIKE $1 OR u.email ILIKE $1)
          AND ($2::text IS NULL OR EXISTS (SELECT 1 FROM role_grants g WHERE g.user_id = u.id AND g.role = $2))
     )
     SELECT (SELECT count(*)::int FROM matching) AS total,
            ARRAY(SELECT u.id FROM matching u ORDER BY ${order} LIMIT $3 OFFSET $4) AS ids`,
    [query.q ? `%${query.q.replace(/[\\%_]/g, '\\$&')}%` : null, query.role ?? null, query.limit, query.offset],
  );
  return row;
}

/** A person named for a school role: their account, its roles anywhere, and the `role@site` grants it holds. */
export interface NamedAccountRow {
  id: string;
  email: string;
  name: string;
  roles: string[];
  held: string[];
}

/** The accounts of these addresses with their grants, locked in ID order so two writers naming the same people cannot deadlock. */
export function lockAccountsByEmail(manager: EntityManager, emails: readonly string[]): Promise<NamedAccountRow[]> {
  return manager.query(
    `SELECT u.id, u.email, u.name,
            ARRAY(SELECT g.role FROM role_grants g WHERE g.user_id = u.id) AS roles,
            ARRAY(SELECT g.role || '@' || g.site_id FROM role_grants g WHERE g.user_id = u.id AND g.site_id IS NOT NULL) AS held
       FROM users u WHERE u.email = ANY($1) ORDER BY u.id FOR UPDATE`,
    [emails],
  );
}

/** Creates an account without a password for each person, answering each new account. */
export function insertInvitedAccounts(manager: EntityManager, people: readonly { email: string; name: string }[]): Promise<{ id: string; email: string; name: string }[]> {
  return manager.query(
    `INSERT INTO users (email, name, password_hash) SELECT email, name, NULL FROM unnest($1::text[], $2::text[]) AS p(email, name) RETURNING id, email, name`,
    [people.map((p) => p.email), people.map((p) => p.name)],
  );
}

/** A school role at a school, for one account. */
export interface SchoolGrant {
  userId: string;
  role: string;
  siteId: string;
}

/** Grants each school role in one statement. */
export async function insertGrants(manager: EntityManager, grants: readonly SchoolGrant[]): Promise<void> {
  await manager.query(`INSERT INTO role_grants (user_id, role, site_id) SELECT * FROM unnest($1::uuid[], $2::text[], $3::uuid[])`, [
    grants.map((g) => g.userId),
    grants.map((g) => g.role),
    grants.map((g) => g.siteId),
  ]);
}

/** Grants one school role unless the account already holds it. */
export async function grantIfAbsent(manager: EntityManager, grant: SchoolGrant): Promise<void> {
  await manager.query(`INSERT INTO role_grants (user_id, role, site_id) VALUES ($1, $2, $3) ON CONFLICT DO NOTHING`, [grant.userId, grant.role, grant.siteId]);
}

/** Takes a school role away; answers whether the account held it. */
export async function removeGrant(manager: EntityManager, grant: SchoolGrant): Promise<boolean> {
  const removed: unknown[] = await manager.query(`DELETE FROM role_grants WHERE user_id = $1 AND role = $2 AND site_id = $3 RETURNING id`, [grant.userId, grant.role, grant.siteId]);
  return removed.length > 0;
}

/** Which of an account's roles are among these (a role that rules out teaching or leading a school). */
export async function rolesAmong(manager: EntityManager, userId: string, roles: readonly string[]): Promise<string[]> {
  const rows: { role: string }[] = await manager.query(`SELECT role FROM role_grants WHERE user_id = $1 AND role = ANY($2)`, [userId, roles]);
  return rows.map((r) => r.role);
}

/** Whether the person is still named at the school for the role: as a classroom's teacher there, or as its principal. */
export async function stillNamed(manager: EntityManager, grant: SchoolGrant): Promise<boolean> {
  const rows: unknown[] =
    grant.role === 'teacher'
      ? await manager.query(`SELECT 1 FROM classrooms WHERE site_id = $1 AND teacher_id = $2 LIMIT 1`, [grant.siteId, grant.userId])
      : await manager.query(`SELECT 1 FROM sites WHERE id = $1 AND principal_id = $2`, [grant.siteId, grant.userId]);
  return rows.length > 0;
}

/** Of these invitations (by e-mail, role and school), the `email|role|site` keys of those still open and unexpired. */
export async function openInvitationKeys(manager: EntityManager, invitations: readonly { email: string; role: string; siteId: string }[]): Promise<Set<string>> {
  if (!invitations.length) return new Set();
  // One probe per person of the open-invitation index on all three of its columns, the account found first by its
  // e-mail: subqueries with LIMIT are never flattened into joins, whose plans on stale statistics took 2 000 named
  // teachers as 100 000 rows, or probed the index by school alone (a tenth of a second either way).
  const rows: { key: string }[] = await manager.query(
    `SELECT o.email || '|' || o.role || '|' || o.site_id AS key
       FROM unnest($1::text[], $2::text[], $3::uuid[]) AS o(email, role, site_id)
      WHERE (SELECT true FROM role_invitations i
              WHERE i.user_id = (SELECT u.id FROM users u WHERE u.email = o.email LIMIT 1)
                AND i.role = o.role AND i.site_id = o.site_id AND i.state = 'pending' AND i.expires_at > now() LIMIT 1)`,
    [invitations.map((o) => o.email), invitations.map((o) => o.role), invitations.map((o) => o.siteId)],
  );
  return new Set(rows.map((r) => r.key));
}

/** Withdraws the open invitations of these roles at these schools to these accounts. */
export async function withdrawInvitations(manager: EntityManager, grants: readonly SchoolGrant[]): Promise<void> {
  await manager.query(
    `UPDATE role_invitations i SET state = 'withdrawn', decided_at = now() FROM unnest($1::uuid[], $2::text[], $3::uuid[]) AS o(user_id, role, site_id)
      WHERE i.user_id = o.user_id AND i.role = o.role AND i.site_id = o.site_id AND i.state = 'pending'`,
    [grants.map((g) => g.userId), grants.map((g) => g.role), grants.map((g) => g.siteId)],
  );
}

/** Records an invitation per grant, open for `days` days, keeping only the hash of its link's token. */
export async function insertInvitations(
  manager: EntityManager,
  invitations: readonly (SchoolGrant & { tokenHash: string })[],
  invitedBy: string,
  days: number,
): Promise<void> {
  await manager.query(
    `INSERT INTO role_invitations (user_id, role, site_id, invited_by, token_hash, expires_at)
     SELECT user_id, role, site_id, $5, token_hash, now() + $6 * interval '1 day' FROM unnest($1::uuid[], $2::text[], $3::uuid[], $4::text[]) AS o(user_id, role, site_id, token_hash)`,
    [invitations.map((o) => o.userId), invitations.map((o) => o.role), invitations.map((o) => o.siteId), invitations.map((o) => o.tokenHash), invitedBy, days],
  );
}

/** Closes an open invitation: accepted, or withdrawn when it no longer stands. */
export async function settleInvitation(manager: EntityManager, id: string, state: 'accepted' | 'withdrawn'): Promise<void> {
  await manager.query(`UPDATE role_invitations SET state = $2, decided_at = now() WHERE id = $1`, [id, state]);
}

/** An open invitation with its school's name and whether it has expired. */
export interface OpenInvitationRow {
  id: string;
  user_id: string;
  role: 'teacher' | 'principal';
  site_id: string;
  site_name: string;
  expired: boolean;
}

const openSelect = `SELECT i.id, i.user_id, i.role, i.site_id, s.name AS site_name, i.expires_at < now() AS expired
  FROM role_invitations i JOIN sites s ON s.id = i.site_id WHERE i.state = 'pending'`;

/** The open invitation a link's token (by its hash) opens, locked for deciding. */
export async function lockOpenInvitationByToken(manager: EntityManager, tokenHash: string): Promise<OpenInvitationRow | undefined> {
  const [row]: OpenInvitationRow[] = await manager.query(`${openSelect} AND i.token_hash = $1 FOR UPDATE OF i`, [tokenHash]);
  return row;
}

/** An account's open invitations, oldest first, locked for deciding. */
export function lockOpenInvitationsOf(manager: EntityManager, userId: string): Promise<OpenInvitationRow[]> {
  return manager.query(`${openSelect} AND i.user_id = $1 ORDER BY i.created_at FOR UPDATE OF i`, [userId]);
}

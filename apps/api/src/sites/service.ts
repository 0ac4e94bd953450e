import type { DataSource, EntityManager } from 'typeorm';
import type { EnrolSite, SessionUser, Site, StudySite, UpdateSite } from '@evenhand/entities';
import { SiteEntity, StudySiteEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import { changeFeed } from '../db/change-feed.js';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { findVisibleStudy, hasRole, sitesOf } from '../studies/access.js';
import { advanceStatus } from '../studies/service.js';
import { ensurePerson, releaseRole } from '../accounts/role-invitations.js';
import { districtWideRoles } from '@evenhand/entities';

interface SiteRow {
  id: string;
  name: string;
  code: string;
  principal_id: string | null;
  principal_name: string | null;
  principal_email: string | null;
  principal_pending: boolean | null;
  classrooms?: number;
  expected_students?: number;
}

const toSite = (r: SiteRow): Site => ({
  id: r.id,
  name: r.name,
  code: r.code,
  principal: r.principal_id
    ? { id: r.principal_id, name: r.principal_name!, email: r.principal_email!, invitationPending: !!r.principal_pending }
    : null,
});

const siteSelect = `SELECT s.id, s.name, s.code, s.principal_id, u.name AS principal_name, u.email AS principal_email,
  (u.password_hash IS NULL OR NOT EXISTS (SELECT 1 FROM role_grants pg WHERE pg.user_id = s.principal_id AND pg.role = 'principal' AND pg.site_id = s.id)) AS principal_pending FROM sites s LEFT JOIN users u ON u.id = s.principal_id`;

export async function listDistrictSites(db: DataSource): Promise<{ items: Site[]; total: number }> {
  const rows: SiteRow[] = await db.query(`${siteSelect} ORDER BY s.name`);
  return { items: rows.map(toSite), total: rows.length };
}

export async function listStudySites(db: DataSource, user: SessionUser, studyId: string): Promise<{ items: StudySite[]; total: number }> {
  await findVisibleStudy(db.manager, user, studyId);
  const rows: SiteRow[] = await db.query(
    `SELECT x.*, count(c.id)::int AS classrooms, coalesce(sum(c.expected_size), 0)::int AS expected_students
       FROM (${siteSelect} JOIN study_sites ss ON ss.site_id = s.id AND ss.study_id = $1) x
       LEFT JOIN classrooms c ON c.site_id = x.id AND c.study_id = $1
      GROUP BY x.id, x.name, x.code, x.principal_id, x.principal_name, x.principal_email, x.principal_pending
      ORDER BY x.name`,
    [studyId],
  );
  return { items: rows.map((r) => ({ ...toSite(r), classrooms: r.classrooms ?? 0, expectedStudents: r.expected_students ?? 0 })), total: rows.length };
}

async function siteById(manager: EntityManager, id: string): Promise<Site> {
  const rows: SiteRow[] = await manager.query(`${siteSelect} WHERE s.id = $1`, [id]);
  if (!rows.length) throw AppError.notFound('The site');
  return toSite(rows[0]);
}

async function assignPrincipal(
  manager: EntityManager,
  deps: Pick<Deps, 'config' | 'jobs'>,
  actor: SessionUser,
  siteId: string,
  principal: { email: string; name: string } | undefined,
  studyId: string | null,
) {
  if (!principal) return;
  const { userId } = await ensurePerson(manager, deps, actor, principal, { role: 'principal', siteId }, studyId);
  const [{ principal_id: before }] = await manager.query(`SELECT principal_id FROM sites WHERE id = $1 FOR UPDATE`, [siteId]);
  await manager.update(SiteEntity, siteId, { principalId: userId });
  // The school's previous principal loses the role there.
  if (before && before !== userId) await releaseRole(manager, actor, before, 'principal', siteId, studyId);
}

/** Enrols an existing school, or registers a new one, in a study; invites its principal if new. */
export async function enrolSite(deps: Deps, actor: SessionUser, studyId: string, input: EnrolSite): Promise<Site> {
  return deps.db.transaction(async (manager) => {
    await findVisibleStudy(manager, actor, studyId, true);
    let siteId: string;
    if ('siteId' in input) {
      if (!(await manager.existsBy(SiteEntity, { id: input.siteId }))) throw AppError.validation('No such site', [{ path: 'siteId', message: 'Choose a site of the district' }]);
      siteId = input.siteId;
    } else {
      const clash = await manager.findOneBy(SiteEntity, { code: input.code });
      if (clash) throw AppError.conflict(`Site code ${input.code} is already used by ${clash.name}`, { issues: [{ path: 'code', message: 'This code is already used' }] });
      siteId = (await manager.save(manager.create(SiteEntity, { name: input.name, code: input.code, principalId: null }))).id;
    }
    if (await manager.existsBy(StudySiteEntity, { studyId, siteId })) throw AppError.conflict('This site is already enrolled in the study');
    await manager.insert(StudySiteEntity, { studyId, siteId });
    await assignPrincipal(manager, deps, actor, siteId, input.principal, studyId);
    await advanceStatus(manager, studyId, 'enrolling', actor.id);
    const site = await siteById(manager, siteId);
    await recordAudit(manager, { actorId: actor.id, studyId, action: 'site.enrolled', entityType: 'site', entityId: siteId, after: site });
    return site;
  });
}

/** Coordinators and leads see any site; a principal only their own (others answer 404). */
export async function getSite(db: DataSource, user: SessionUser, id: string): Promise<Site> {
  if (!hasRole(user, ...districtWideRoles) && !sitesOf(user, 'principal').includes(id)) throw AppError.notFound('The site');
  return siteById(db.manager, id);
}

export async function updateSite(deps: Deps, actor: SessionUser, id: string, input: UpdateSite): Promise<Site> {
  return deps.db.transaction(async (manager) => {
    const before = await siteById(manager, id);
    if (input.code && input.code !== before.code && (await manager.existsBy(SiteEntity, { code: input.code }))) {
      throw AppError.conflict(`Site code ${input.code} is already used`, { issues: [{ path: 'code', message: 'This code is already used' }] });
    }
    // Sessions show their schools' names: the session check reads this one afresh from the next request on.
    if (input.name) changeFeed(deps.db).expect(`site:${id}`);
    if (input.name || input.code) await manager.update(SiteEntity, id, { name: input.name ?? before.name, code: input.code ?? before.code });
    await assignPrincipal(manager, deps, actor, id, input.principal, null);
    const after = await siteById(manager, id);
    await recordAudit(manager, { actorId: actor.id, action: 'site.updated', entityType: 'site', entityId: id, before, after });
    return after;
  });
}

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
import { districtSiteRows, siteRow, studySiteRows, type SiteRow } from './queries.js';
import { districtWideRoles } from '@evenhand/entities';

const toSite = (r: SiteRow): Site => ({
  id: r.id,
  name: r.name,
  code: r.code,
  principal: r.principal_id
    ? { id: r.principal_id, name: r.principal_name!, email: r.principal_email!, invitationPending: !!r.principal_pending }
    : null,
});

export async function listDistrictSites(db: DataSource): Promise<{ items: Site[]; total: number }> {
  const rows = await districtSiteRows(db.manager);
  return { items: rows.map(toSite), total: rows.length };
}

export async function listStudySites(db: DataSource, user: SessionUser, studyId: string): Promise<{ items: StudySite[]; total: number }> {
  await findVisibleStudy(db.manager, user, studyId);
  const rows = await studySiteRows(db.manager, studyId);
  return { items: rows.map((r) => ({ ...toSite(r), classrooms: r.classrooms ?? 0, expectedStudents: r.expected_students ?? 0 })), total: rows.length };
}

async function siteById(manager: EntityManager, id: string): Promise<Site> {
  const row = await siteRow(manager, id);
  if (!row) throw AppError.notFound('The site');
  return toSite(row);
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
  const before = (await manager.findOne(SiteEntity, { where: { id: siteId }, select: { id: true, principalId: true }, lock: { mode: 'pessimistic_write' } }))?.principalId;
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

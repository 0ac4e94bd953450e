import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { enrolSiteSchema, idParamsSchema, pageOf, siteSchema, studyParamsSchema, studyReaderRoles, studySiteSchema, updateSiteSchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { enrolSite, getSite, listDistrictSites, listStudySites, updateSite } from './service.js';

export function sitesRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Sites';

  r.route(
    {
      method: 'get',
      path: '/sites',
      summary: "The district's schools (for role grants and enrolment)",
      access: ['admin', 'coordinator', 'research_lead'],
      tag,
      responses: { 200: { description: 'All sites', schema: pageOf(siteSchema) } },
    },
    async () => ({ body: await listDistrictSites(deps.db) }),
  );

  r.route(
    {
      method: 'get',
      path: '/studies/:id/sites',
      summary: 'The sites enrolled in a study, with classroom counts',
      access: studyReaderRoles,
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'Enrolled sites', schema: pageOf(studySiteSchema) } },
    },
    async ({ user, params }) => ({ body: await listStudySites(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/sites',
      summary: 'Enrol a school (existing by id, or new by name and code); invites its principal',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      body: enrolSiteSchema,
      responses: { 201: { description: 'Enrolled', schema: siteSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await enrolSite(deps, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'get',
      path: '/sites/:id',
      summary: 'One site (principals: their own only)',
      access: ['coordinator', 'research_lead', 'admin', 'principal'],
      tag,
      params: idParamsSchema,
      responses: { 200: { description: 'The site', schema: siteSchema } },
    },
    async ({ user, params }) => ({ body: await getSite(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'patch',
      path: '/sites/:id',
      summary: 'Rename a site, change its code, or set its principal (invited if new)',
      access: ['coordinator'],
      tag,
      params: idParamsSchema,
      body: updateSiteSchema,
      responses: { 200: { description: 'The site as it is now', schema: siteSchema } },
    },
    async ({ user, params, body }) => ({ body: await updateSite(deps, user!, params.id, body) }),
  );

  return r.router;
}

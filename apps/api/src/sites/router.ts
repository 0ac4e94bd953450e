import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { pageOf, siteSchema } from '@evenhand/entities';
import { SiteEntity } from '@evenhand/entities/orm';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';

export function sitesRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  r.route(
    {
      method: 'get',
      path: '/sites',
      summary: "The district's schools (for role grants and enrolment)",
      access: ['admin', 'coordinator', 'research_lead'],
      tag: 'Sites',
      responses: { 200: { description: 'All sites', schema: pageOf(siteSchema) } },
    },
    async () => {
      const [rows, total] = await deps.db.getRepository(SiteEntity).findAndCount({ order: { name: 'ASC' } });
      return { body: { items: rows.map(({ id, name, code }) => ({ id, name, code })), total } };
    },
  );
  return r.router;
}

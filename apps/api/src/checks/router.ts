import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { studyChecksSchema, studyParamsSchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { studyChecks } from './service.js';

export function checksRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  r.route(
    {
      method: 'get',
      path: '/studies/:id/checks',
      summary: 'Data quality, box plots, attrition against the published boundaries, and baseline equivalence, per measure',
      access: ['research_lead', 'reviewer'],
      tag: 'Checks',
      params: studyParamsSchema,
      responses: { 200: { description: 'The checks', schema: studyChecksSchema } },
    },
    async ({ user, params }) => ({ body: await studyChecks(deps.db, user!, params.id) }),
  );
  return r.router;
}

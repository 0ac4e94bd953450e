import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { studyEvidenceQuerySchema, studyEvidenceSchema, studyParamsSchema, studyReaderRoles } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { studyEvidence } from './service.js';

export function evidenceRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  r.route(
    {
      method: 'get',
      path: '/studies/:id/evidence',
      summary: 'A preview of each pre-specified comparison’s evidence-standard rating and evidence tier, with every reason and what puts it at risk',
      access: studyReaderRoles,
      tag: 'Checks',
      params: studyParamsSchema,
      query: studyEvidenceQuerySchema,
      responses: { 200: { description: 'The verdict per pre-specified comparison', schema: studyEvidenceSchema } },
    },
    async ({ user, params, query }) => ({ body: await studyEvidence(deps.db, user!, params.id, query.boundary) }),
  );
  return r.router;
}

import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { auditEventSchema, auditQuerySchema, pageOf } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { listAudit } from './service.js';

export function auditRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  r.route(
    {
      method: 'get',
      path: '/audit',
      summary: 'Who changed what, when (newest first)',
      access: ['admin', 'research_lead', 'reviewer'],
      tag: 'Audit',
      query: auditQuerySchema,
      responses: { 200: { description: 'A page of audit events', schema: pageOf(auditEventSchema) } },
    },
    async ({ query, user }) => ({ body: await listAudit(deps.db.manager, user!, query) }),
  );
  return r.router;
}

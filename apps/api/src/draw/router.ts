import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { drawRequestSchema, drawSchema, reassignmentSchema, studyParamsSchema, studyReaderRoles } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { drawAssignment, readDraw, reassign } from './service.js';

export function drawRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Draw';

  r.route(
    {
      method: 'post',
      path: '/studies/:id/draw',
      summary: 'Preview (commit: false) or commit the seeded random assignment, blocked by site',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      body: drawRequestSchema,
      responses: {
        200: { description: 'A preview; nothing stored', schema: drawSchema },
        201: { description: 'Committed; immutable from now on', schema: drawSchema },
      },
    },
    async ({ user, params, body }) => {
      const draw = await drawAssignment(deps.db, user!, params.id, body);
      return { status: draw.committed ? 201 : 200, body: draw };
    },
  );

  r.route(
    {
      method: 'get',
      path: '/studies/:id/draw',
      summary: 'The committed draw with its balance table, re-derived from the seed (`verified`); null before it is committed',
      access: studyReaderRoles,
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'The draw, or null before it is committed', schema: drawSchema.nullable() } },
    },
    async ({ user, params }) => ({ body: await readDraw(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/draw/reassignments',
      summary: 'Move one classroom to the other arm, with a reason; marks the study quasi-experimental',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      body: reassignmentSchema,
      responses: { 201: { description: 'The draw with the reassignment recorded', schema: drawSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await reassign(deps.db, user!, params.id, body) }),
  );

  return r.router;
}

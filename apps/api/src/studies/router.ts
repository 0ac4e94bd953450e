import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { createStudySchema, pageOf, studiesQuerySchema, studyParamsSchema, studySchema, studyWriterRoles, updateStudySchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { createStudy, getStudy, listStudies, updateStudy } from './service.js';

export function studiesRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Studies';

  r.route(
    {
      method: 'get',
      path: '/studies',
      summary: 'Studies the caller has a stake in (teachers: their classrooms’; principals: their school’s)',
      access: 'signed-in',
      tag,
      query: studiesQuerySchema,
      responses: { 200: { description: 'A page of studies', schema: pageOf(studySchema) } },
    },
    async ({ user, query }) => ({ body: await listStudies(deps.db, user!, query) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies',
      summary: 'Start a study (state: drafting)',
      access: studyWriterRoles,
      tag,
      body: createStudySchema,
      responses: { 201: { description: 'Created', schema: studySchema } },
    },
    async ({ user, body }) => ({ status: 201, body: await createStudy(deps.db, user!, body) }),
  );

  r.route(
    {
      method: 'get',
      path: '/studies/:id',
      summary: 'One study with its counts',
      access: 'signed-in',
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'The study', schema: studySchema } },
    },
    async ({ user, params }) => ({ body: await getStudy(deps.db.manager, user!, params.id) }),
  );

  r.route(
    {
      method: 'patch',
      path: '/studies/:id',
      summary: 'Edit a study’s description, or archive it',
      access: studyWriterRoles,
      tag,
      params: studyParamsSchema,
      body: updateStudySchema,
      responses: { 200: { description: 'The study as it is now', schema: studySchema } },
    },
    async ({ user, params, body }) => ({ body: await updateStudy(deps.db, user!, params.id, body) }),
  );

  return r.router;
}

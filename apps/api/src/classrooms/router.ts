import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import {
  classroomImportResultSchema,
  classroomSchema,
  cohortSchema,
  createClassroomSchema,
  createCohortSchema,
  idParamsSchema,
  pageOf,
  studyParamsSchema,
  studyReaderRoles,
  updateClassroomSchema,
} from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { singleFile } from '../http/upload.js';
import { createClassroom, createCohort, importClassrooms, listClassrooms, listCohorts, updateClassroom } from './service.js';

export function classroomsRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Classrooms and cohorts';

  r.route(
    {
      method: 'get',
      path: '/studies/:id/cohorts',
      summary: 'The study’s cohorts',
      access: studyReaderRoles,
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'All cohorts', schema: pageOf(cohortSchema) } },
    },
    async ({ user, params }) => ({ body: await listCohorts(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/cohorts',
      summary: 'Add a cohort',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      body: createCohortSchema,
      responses: { 201: { description: 'Created', schema: cohortSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await createCohort(deps.db, user!, params.id, body.name) }),
  );

  r.route(
    {
      method: 'get',
      path: '/studies/:id/classrooms',
      summary: 'Classrooms (teachers: their own; principals: their school’s)',
      access: [...studyReaderRoles, 'teacher', 'principal'],
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'Classrooms', schema: pageOf(classroomSchema) } },
    },
    async ({ user, params }) => ({ body: await listClassrooms(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/classrooms',
      summary: 'Add a classroom with its teacher (invited by e-mail if new)',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      body: createClassroomSchema,
      responses: { 201: { description: 'Created', schema: classroomSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await createClassroom(deps, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/classrooms/import',
      summary:
        'Bulk add classrooms from a CSV (multipart field `file`; columns site_code, cohort, classroom, grade, expected_size, teacher_email, teacher_name); all rows or none',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      before: [singleFile(1024 * 1024)],
      responses: { 201: { description: 'Imported', schema: classroomImportResultSchema } },
    },
    async ({ user, params, req }) => ({ status: 201, body: await importClassrooms(deps, user!, params.id, req.file!.buffer) }),
  );

  r.route(
    {
      method: 'patch',
      path: '/classrooms/:id',
      summary: 'Edit a classroom (name, grade, expected size, cohort, teacher)',
      access: ['coordinator'],
      tag,
      params: idParamsSchema,
      body: updateClassroomSchema,
      responses: { 200: { description: 'The classroom as it is now', schema: classroomSchema } },
    },
    async ({ user, params, body }) => ({ body: await updateClassroom(deps, user!, params.id, body) }),
  );

  return r.router;
}

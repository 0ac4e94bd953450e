import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import {
  digestDetailSchema,
  digestPreferenceQuerySchema,
  digestPreferenceSchema,
  digestScheduleSchema,
  digestSchema,
  digestsQuerySchema,
  idParamsSchema,
  mySchoolSchema,
  pageOf,
  sendDigestsResultSchema,
  studyParamsSchema,
  studyWriterRoles,
  updateDigestPreferenceSchema,
} from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { getPreference, mySchool, setPreference } from './preferences.js';
import { getSchedule, saveSchedule } from './schedules.js';
import { getDigest, listDigests, sendDigestsNow } from './service.js';

export function digestsRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Digests';
  const staff = studyWriterRoles;

  r.route(
    {
      method: 'get',
      path: '/studies/:id/digests',
      summary: 'The study’s digest outbox, newest first: recipient, school, kind, state, attempts and last error',
      access: staff,
      tag,
      params: studyParamsSchema,
      query: digestsQuerySchema,
      responses: { 200: { description: 'Digests', schema: pageOf(digestSchema) } },
    },
    async ({ user, params, query }) => ({ body: await listDigests(deps.db, user!, params.id, query) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/digests/send',
      summary: 'Send a digest now to every principal of the study (except those who chose none); delivery is asynchronous',
      access: staff,
      tag,
      params: studyParamsSchema,
      responses: { 202: { description: 'Queued in the outbox', schema: sendDigestsResultSchema } },
    },
    async ({ user, params }) => ({ status: 202, body: await sendDigestsNow(deps.db, deps, user!, params.id) }),
  );

  r.route(
    {
      method: 'get',
      path: '/digests/:id',
      summary: 'One digest with the HTML and plain text exactly as the principal receives them',
      access: staff,
      tag,
      params: idParamsSchema,
      responses: { 200: { description: 'The digest', schema: digestDetailSchema } },
    },
    async ({ user, params }) => ({ body: await getDigest(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'get',
      path: '/studies/:id/digest-schedule',
      summary: 'When the weekly digest goes out while a wave is open',
      access: staff,
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'The schedule', schema: digestScheduleSchema } },
    },
    async ({ user, params }) => ({ body: await getSchedule(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'put',
      path: '/studies/:id/digest-schedule',
      summary: 'Change or turn off the weekly digest',
      access: staff,
      tag,
      params: studyParamsSchema,
      body: digestScheduleSchema,
      responses: { 200: { description: 'Saved', schema: digestScheduleSchema } },
    },
    async ({ user, params, body }) => ({ body: await saveSchedule(deps.db, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'get',
      path: '/my-school',
      summary: 'The principal’s own schools: the digest’s facts, live, with small cells suppressed',
      access: ['principal'],
      tag,
      responses: { 200: { description: 'My school', schema: mySchoolSchema } },
    },
    async ({ user }) => ({ body: await mySchool(deps.db, deps.config, user!) }),
  );

  r.route(
    {
      method: 'get',
      path: '/digest-preferences',
      summary: 'How often the owner of a digest link gets digests (the link’s signed token, no sign-in)',
      access: 'anyone',
      tag,
      query: digestPreferenceQuerySchema,
      responses: { 200: { description: 'The preference', schema: digestPreferenceSchema } },
    },
    async ({ query }) => ({ body: await getPreference(deps.db, deps.config, query.token) }),
  );

  r.route(
    {
      method: 'put',
      path: '/digest-preferences',
      summary: 'Change how often the owner of a digest link gets digests: weekly, only when a result is locked, or none',
      access: 'anyone',
      tag,
      body: updateDigestPreferenceSchema,
      responses: { 200: { description: 'Saved', schema: digestPreferenceSchema } },
    },
    async ({ body }) => ({ body: await setPreference(deps.db, deps.config, body.token, body.frequency, 'preferences page') }),
  );

  r.route(
    {
      method: 'post',
      path: '/digest-preferences/one-click',
      summary: 'One-click unsubscribe from a mail program (RFC 8058 List-Unsubscribe-Post): no more digests',
      access: 'anyone',
      tag,
      query: digestPreferenceQuerySchema,
      responses: { 200: { description: 'Unsubscribed', schema: digestPreferenceSchema } },
    },
    async ({ query }) => ({ body: await setPreference(deps.db, deps.config, query.token, 'none', 'one-click unsubscribe') }),
  );

  return r.router;
}

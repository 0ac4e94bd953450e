import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { districtWideRoles, toDoListSchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { listToDo } from './service.js';

export function homeRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  r.route(
    {
      method: 'get',
      path: '/to-do',
      summary: 'What waits for the signed-in person: sheets to review, late sheets, runs to lock, results to read, accounts to finish',
      // Teachers and principals read theirs on My classes and My school, from their own data.
      access: districtWideRoles,
      tag: 'Home',
      responses: { 200: { description: 'The person’s to-do list', schema: toDoListSchema } },
    },
    async ({ user }) => ({ body: await listToDo(deps.db, user!) }),
  );
  return r.router;
}

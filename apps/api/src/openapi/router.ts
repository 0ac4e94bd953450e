import { OpenApiGeneratorV31, type OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { ResourceRouter } from '../http/route.js';

export function openApiRouter(registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  let document: unknown;
  r.route(
    {
      method: 'get',
      path: '/openapi.json',
      summary: 'This API described as OpenAPI 3.1, generated from the shared zod schemas',
      access: 'anyone',
      tag: 'Meta',
      responses: { 200: { description: 'The OpenAPI document' } },
    },
    () => {
      // Built on first request, when every router has registered its routes.
      document ??= new OpenApiGeneratorV31(registry.definitions).generateDocument({
        openapi: '3.1.0',
        info: {
          title: 'Evenhand API',
          version: '1',
          description:
            'Cookie sessions need the X-CSRF-Token header (equal to the evenhand_csrf cookie) on state-changing requests; integrations send Authorization: Bearer <token> from POST /api/auth/login. `x-access` names who may call each route.',
        },
        servers: [{ url: '/' }],
      });
      return { body: document };
    },
  );
  return r.router;
}

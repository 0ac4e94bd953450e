import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { healthSchema } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { ping } from './queries.js';

const PROBE_TIMEOUT_MS = 2000;

/** True when the database answers within the timeout; the pool reconnects by itself after an outage. */
async function databaseAnswers({ db }: Deps): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<false>((resolve) => (timer = setTimeout(() => resolve(false), PROBE_TIMEOUT_MS)));
  try {
    return await Promise.race([ping(db.manager).then(() => true), timeout]);
  } catch {
    return false;
  } finally {
    clearTimeout(timer);
  }
}

export function healthRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  r.route(
    {
      method: 'get',
      path: '/health',
      summary: 'Is the service and its database up',
      access: 'anyone',
      tag: 'Health',
      responses: {
        200: { description: 'Up', schema: healthSchema },
        503: { description: 'The database is unreachable', schema: healthSchema },
      },
    },
    async () => {
      const up = await databaseAnswers(deps);
      return up ? { body: { status: 'ok', db: 'ok' } } : { status: 503, body: { status: 'degraded', db: 'down' } };
    },
  );
  return r.router;
}

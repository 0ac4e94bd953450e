import type { EntityManager } from 'typeorm';

// The health check's named SQL (DEVELOPERS.md, "Data access").

/** Whether the database answers a statement at all. */
export async function ping(manager: EntityManager): Promise<void> {
  await manager.query('SELECT 1');
}

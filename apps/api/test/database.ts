import pg from 'pg';

/** The test cluster's URL, set by `npm test` (scripts/test.sh), which also starts the cluster. */
export function testDatabaseUrl(): URL {
  const url = process.env.TEST_DATABASE_URL;
  if (!url) throw new Error('TEST_DATABASE_URL is not set: run the tests with `npm test`, which starts the test database');
  return new URL(url);
}

export function urlForDatabase(name: string): string {
  const url = testDatabaseUrl();
  url.pathname = `/${name}`;
  return url.toString();
}

/** The role the test apps run as, like the application in production: it owns nothing (see src/db/roles.ts). */
export const APP_ROLE = 'evenhand_app';

/** The URL of a test database as the application's role (same password as the cluster's admin). */
export function appUrlForDatabase(name: string): string {
  const url = new URL(urlForDatabase(name));
  url.username = APP_ROLE;
  return url.toString();
}

/** Creates the application's role on the test cluster once (a run started by npm test finds it made by scripts/lib.sh). */
export async function ensureAppRole(client: pg.Client): Promise<void> {
  const password = testDatabaseUrl().password;
  try {
    await client.query(
      `DO $$ BEGIN
         IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = '${APP_ROLE}') THEN
           CREATE ROLE ${APP_ROLE} LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE NOREPLICATION PASSWORD '${decodeURIComponent(password).replaceAll("'", "''")}';
         END IF;
       END $$`,
    );
  } catch (err) {
    // Two runs starting at once: the other one made it.
    if ((err as { code?: string }).code !== '23505' && (err as { code?: string }).code !== '42710') throw err;
  }
}

export async function withAdminClient<T>(fn: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: urlForDatabase('postgres') });
  await client.connect();
  try {
    return await fn(client);
  } finally {
    await client.end();
  }
}

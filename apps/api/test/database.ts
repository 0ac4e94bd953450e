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

export async function withAdminClient<T>(fn: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: urlForDatabase('postgres') });
  await client.connect();
  try {
    return await fn(client);
  } finally {
    await client.end();
  }
}

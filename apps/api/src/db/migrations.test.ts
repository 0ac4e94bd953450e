import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DataSource } from 'typeorm';
import { urlForDatabase, withAdminClient } from '../../test/database.js';
import { createDataSource } from './data-source.js';
import { migrations } from './migrations/index.js';

// Its own empty database: the template every other file clones is migrated and seeded already.
const database = `evenhand_migrations_${process.pid}`;
let db: DataSource;

/** Everything a migration creates in the public schema, as sorted text lines (TypeORM's own table left out). */
async function schemaOf(source: DataSource): Promise<string[]> {
  const rows: { line: string }[] = await source.query(`
    SELECT 'column ' || table_name || '.' || column_name || ' ' || data_type || ' ' || is_nullable || ' ' || coalesce(column_default, '') AS line
      FROM information_schema.columns WHERE table_schema = 'public' AND table_name <> 'migrations'
    UNION ALL
    SELECT 'constraint ' || conrelid::regclass || ' ' || pg_get_constraintdef(oid)
      FROM pg_constraint WHERE connamespace = 'public'::regnamespace AND conrelid <> 'public.migrations'::regclass
    UNION ALL
    SELECT 'index ' || indexdef FROM pg_indexes WHERE schemaname = 'public' AND tablename <> 'migrations'
    UNION ALL
    SELECT 'trigger ' || tgrelid::regclass || ' ' || tgname || ' ' || pg_get_triggerdef(oid)
      FROM pg_trigger WHERE NOT tgisinternal AND tgrelid IN (SELECT oid FROM pg_class WHERE relnamespace = 'public'::regnamespace)
    UNION ALL
    SELECT 'function ' || proname || ' ' || md5(prosrc) FROM pg_proc p WHERE pronamespace = 'public'::regnamespace
      -- An extension's functions (uuid-ossp) stay: down() leaves extensions installed, as other databases may share them.
      AND NOT EXISTS (SELECT 1 FROM pg_depend d WHERE d.objid = p.oid AND d.deptype = 'e')
    UNION ALL
    SELECT 'type ' || typname FROM pg_type WHERE typnamespace = 'public'::regnamespace AND typtype IN ('e', 'd')
    ORDER BY 1`);
  return rows.map((row) => row.line);
}

beforeAll(async () => {
  await withAdminClient(async (client) => {
    await client.query(`DROP DATABASE IF EXISTS ${database} WITH (FORCE)`);
    await client.query(`CREATE DATABASE ${database}`);
  });
  db = createDataSource(urlForDatabase(database));
  await db.initialize();
});

afterAll(async () => {
  await db?.destroy();
  await withAdminClient((client) => client.query(`DROP DATABASE IF EXISTS ${database} WITH (FORCE)`));
});

describe('migrations', () => {
  it('when every migration is applied, undone down to an empty schema and applied again, then the schema is the same both times', async () => {
    const applied = await db.runMigrations({ transaction: 'each' });
    expect(applied).toHaveLength(migrations.length);
    const first = await schemaOf(db);
    expect(first.some((line) => line.startsWith('column scores.score '))).toBe(true);

    for (let undone = 0; undone < migrations.length; undone++) await db.undoLastMigration({ transaction: 'each' });
    expect(await db.query(`SELECT count(*)::int AS n FROM migrations`)).toEqual([{ n: 0 }]);
    expect(await schemaOf(db)).toEqual([]);

    expect(await db.runMigrations({ transaction: 'each' })).toHaveLength(migrations.length);
    expect(await schemaOf(db)).toEqual(first);
  });
});

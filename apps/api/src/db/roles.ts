const ident = (name: string) => `"${name.replaceAll('"', '""')}"`;

/**
 * The application's database role owns nothing: the migration role owns the schema (tables, triggers, the job
 * queue's schema), so the application can neither truncate, alter, drop nor disable a trigger: it gets plain row
 * access (the triggers refuse what the rows' rules forbid) and only reads the migrations log. Run after every
 * migration, as the owner.
 */
export async function grantToApplication(query: (sql: string) => Promise<unknown>, role: string): Promise<void> {
  const r = ident(role);
  await query(`GRANT USAGE ON SCHEMA public, pgboss TO ${r}`);
  await query(`GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public, pgboss TO ${r}`);
  await query(`REVOKE TRUNCATE, REFERENCES, TRIGGER ON ALL TABLES IN SCHEMA public, pgboss FROM ${r}`);
  await query(`REVOKE INSERT, UPDATE, DELETE ON migrations FROM ${r}`);
  await query(`GRANT USAGE, SELECT, UPDATE ON ALL SEQUENCES IN SCHEMA public, pgboss TO ${r}`);
}

/** The user name in a PostgreSQL URL. */
export const roleOf = (url: string) => decodeURIComponent(new URL(url).username);

import type { EntityManager } from 'typeorm';
import type { Role } from '@evenhand/entities';
import { RoleGrantEntity, SiteEntity, UserEntity } from '@evenhand/entities/orm';
import { hashPassword } from '../auth/passwords.js';

/** Every demo account signs in with this password (development and tests only). */
export const DEMO_PASSWORD = 'evenhand-demo';

/** Quillmarsh Valley is an invented district; its schools and people are made up. */
export const demoSites = [
  { code: 'ALD', name: 'Alderquill Elementary' },
  { code: 'BRK', name: 'Brackenwold Middle School' },
  { code: 'CDH', name: 'Cinderhaze Elementary' },
  { code: 'DNP', name: 'Dunnowick Park Elementary' },
  { code: 'ELR', name: 'Emberlark Middle School' },
  { code: 'FRN', name: 'Fernquillow Elementary' },
] as const;

const extraTeacherNames = [
  'Wendell Quillstep', 'Marguerite Bramblewake', 'Castor Ashmantle', 'Yetunde Glimmerdale',
  'Piers Nettlequaff', 'Anneliese Owlthorne', 'Ruairi Ploverkin', 'Delphine Reedwhistle',
  'Tobias Sorrelwick', 'Keziah Tumblethorn', 'Emeric Umberwisp', 'Solveig Vellumgate',
  'Lucius Wrenmantle', 'Hollis Yarrowick', 'Noor Zephyrcott', 'Fintan Amberquill',
];

type DemoAccount = { email: string; name: string; grants: { role: Role; site?: string }[] };

/** One account per role and the staff of the first two schools: the ones the sign-in page offers. */
export const featuredDemoAccounts: DemoAccount[] = [
  { email: 'admin@evenhand.test', name: 'Avery Inkwhistle', grants: [{ role: 'admin' }] },
  { email: 'coordinator@evenhand.test', name: 'Corin Tallowmere', grants: [{ role: 'coordinator' }] },
  { email: 'lead@evenhand.test', name: 'Leigh Pennyquill', grants: [{ role: 'research_lead' }] },
  { email: 'teacher1@evenhand.test', name: 'Tomasz Thimblewick', grants: [{ role: 'teacher', site: 'ALD' }] },
  { email: 'teacher2@evenhand.test', name: 'Priya Saltmarrow', grants: [{ role: 'teacher', site: 'ALD' }] },
  { email: 'teacher3@evenhand.test', name: 'Jonah Kettleburn', grants: [{ role: 'teacher', site: 'BRK' }] },
  { email: 'teacher4@evenhand.test', name: 'Marisol Brindlequay', grants: [{ role: 'teacher', site: 'BRK' }] },
  { email: 'principal1@evenhand.test', name: 'Dr. Helena Moonquarry', grants: [{ role: 'principal', site: 'ALD' }] },
  { email: 'principal2@evenhand.test', name: 'Samuel Driftwillow', grants: [{ role: 'principal', site: 'BRK' }] },
  { email: 'reviewer@evenhand.test', name: 'Rowan Gleamfeather', grants: [{ role: 'reviewer' }] },
];

export const demoAccounts: DemoAccount[] = [
  ...featuredDemoAccounts,
  // The other schools' staff, so every demo classroom has a teacher and every school a principal.
  { email: 'principal3@evenhand.test', name: 'Oksana Ribbonmoor', grants: [{ role: 'principal', site: 'CDH' }] },
  { email: 'principal4@evenhand.test', name: 'Bartholomew Cloudhopper', grants: [{ role: 'principal', site: 'DNP' }] },
  { email: 'principal5@evenhand.test', name: 'Greta Sparrowgild', grants: [{ role: 'principal', site: 'ELR' }] },
  { email: 'principal6@evenhand.test', name: 'Idris Tinderholt', grants: [{ role: 'principal', site: 'FRN' }] },
  ...['CDH', 'DNP', 'ELR', 'FRN'].flatMap((site, i) =>
    [0, 1, 2, 3].map((j) => ({
      email: `teacher${5 + i * 4 + j}@evenhand.test`,
      name: extraTeacherNames[i * 4 + j],
      grants: [{ role: 'teacher' as const, site }],
    })),
  ),
];

/** Idempotent: adds what is missing, leaves what exists (including changed passwords) alone. */
export async function seedDemo(manager: EntityManager): Promise<{ created: number }> {
  let created = 0;
  const siteIds = new Map<string, string>();
  for (const site of demoSites) {
    await manager.createQueryBuilder().insert().into(SiteEntity).values(site).orIgnore().execute();
    const row = await manager.findOneByOrFail(SiteEntity, { code: site.code });
    siteIds.set(site.code, row.id);
  }
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  for (const account of demoAccounts) {
    if (await manager.existsBy(UserEntity, { email: account.email })) continue;
    const user = await manager.save(manager.create(UserEntity, { email: account.email, name: account.name, passwordHash, active: true }));
    await manager.insert(
      RoleGrantEntity,
      account.grants.map((g) => ({ userId: user.id, role: g.role, siteId: g.site ? siteIds.get(g.site)! : null })),
    );
    created++;
  }
  return { created };
}

/**
 * Empties every table but the migrations log. The guarded tables refuse TRUNCATE by trigger, so this runs with
 * triggers off for the transaction (session_replication_role), which only a superuser may set: a local
 * development cluster's owner, never the application's role.
 */
export async function resetDatabase(manager: EntityManager): Promise<void> {
  await manager.query(`SET LOCAL session_replication_role = replica`);
  const tables: { tablename: string }[] = await manager.query(
    `SELECT tablename FROM pg_tables WHERE schemaname = 'public' AND tablename <> 'migrations'`,
  );
  if (tables.length) await manager.query(`TRUNCATE ${tables.map((t) => `"${t.tablename}"`).join(', ')} CASCADE`);
}

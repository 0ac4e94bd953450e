// Shared set-up for the API benchmarks: each benchmark gets a fresh database of its own on the benchmark
// cluster (so two can run side by side), migrated and seeded with the demo, and the real app over it.
import pg from 'pg';
import type { DataSource } from 'typeorm';
import type { Express } from 'express';
import { createApp } from '../src/app.js';
import { loadSessionUser } from '../src/auth/service.js';
import { loadConfig } from '../src/config.js';
import { createDataSource } from '../src/db/data-source.js';
import { startQueue } from '../src/jobs/queue.js';
import { createLogger } from '../src/logger.js';
import { createMailer } from '../src/mail/mailer.js';
import { seedDemo } from '../src/seed/demo.js';

export const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

export async function time(fn: () => Promise<unknown>): Promise<number> {
  const t0 = performance.now();
  await fn();
  return performance.now() - t0;
}

export interface Bench {
  url: string;
  db: DataSource;
  app: Express;
  logger: ReturnType<typeof createLogger>;
  lead: NonNullable<Awaited<ReturnType<typeof loadSessionUser>>>;
  /** A sealed study with one measure and an outcome wave open today, plus `classrooms` classrooms over `sites` sites. */
  study(classrooms: number, sites: number): Promise<{ studyId: string; measureId: string; waveId: string }>;
  close(): Promise<void>;
}

export async function openBench(name: string): Promise<Bench> {
  const clusterUrl = process.env.BENCH_DATABASE_URL;
  if (!clusterUrl) throw new Error('run with `npm run bench -w apps/api`, which starts the database');
  const admin = new URL(clusterUrl);
  admin.pathname = '/postgres';
  const database = `evenhand_bench_${name}`;
  const c = new pg.Client({ connectionString: admin.toString() });
  await c.connect();
  await c.query(`DROP DATABASE IF EXISTS ${database} WITH (FORCE)`);
  await c.query(`CREATE DATABASE ${database}`);
  await c.end();
  const url = new URL(clusterUrl);
  url.pathname = `/${database}`;

  const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: url.toString(), LOG_LEVEL: 'silent', SMTP_PORT: '1' });
  const logger = createLogger(config);
  const db = createDataSource(url.toString());
  await db.initialize();
  await db.runMigrations();
  await db.transaction((m) => seedDemo(m));
  const jobs = await startQueue(url.toString(), logger);
  const app = createApp({ config, db, mailer: createMailer(config), logger, jobs });
  const lead = (await loadSessionUser(db, (await db.query(`SELECT id FROM users WHERE email = 'lead@evenhand.test'`))[0].id))!;

  async function study(classrooms: number, sites: number) {
    const [s] = await db.query(`INSERT INTO studies (title, intervention, comparison_condition, unit_of_assignment, status, created_by) VALUES ('Bench', 'x', 'y', 'classroom', 'collecting', $1) RETURNING id`, [lead.id]);
    const [m] = await db.query(`INSERT INTO measures (study_id, name, min_score, max_score, higher_is_better, kind) VALUES ($1, 'Score', 0, 1000, true, 'achievement') RETURNING id`, [s.id]);
    const [w] = await db.query(`INSERT INTO waves (study_id, kind, name, opens_on, closes_on) VALUES ($1, 'outcome', 'Now', current_date - 1, current_date + 30) RETURNING id`, [s.id]);
    const plan = { primaryMeasureId: m.id, primaryWaveId: w.id, hypothesis: 'Benchmark hypothesis text.', alpha: 0.05, alternative: 'two-sided', alternativeJustification: '', primaryTest: 'welch', primaryTestReason: '', covariate: 'none', unitOfAnalysis: 'student', iccSource: 'default', icc: null, smallestEffectOfInterest: 0.25, plannedSites: sites, plannedClassrooms: classrooms, plannedStudentsPerClassroom: 25, shareIntervention: 0.5, summaryEntryAllowed: false, covariateR2: 0 };
    await db.query(`INSERT INTO plan_versions (study_id, version, content, sha256, created_by) VALUES ($1, 1, $2, repeat('0', 64), $3)`, [s.id, plan, lead.id]);
    const teacher = (await db.query(`SELECT id FROM users WHERE email = 'teacher1@evenhand.test'`))[0].id;
    await db.query(`INSERT INTO sites (name, code) SELECT 'Bench site ' || i, 'B' || substr(md5($1 || i), 1, 10) FROM generate_series(1, $2) i`, [s.id, sites]);
    await db.query(`INSERT INTO study_sites (study_id, site_id) SELECT $1, id FROM sites WHERE name LIKE 'Bench site %' AND code LIKE 'B%' AND id NOT IN (SELECT site_id FROM study_sites)`, [s.id]);
    const [cohort] = await db.query(`INSERT INTO cohorts (study_id, name) VALUES ($1, 'All') RETURNING id`, [s.id]);
    await db.query(
      `INSERT INTO classrooms (study_id, site_id, cohort_id, teacher_id, name, grade, expected_size, arm)
       SELECT $1, ss.site_id, $2, $3, 'Room ' || i, '4', 25, CASE WHEN i % 2 = 0 THEN 'intervention' ELSE 'comparison' END
         FROM generate_series(1, $4) i
         JOIN LATERAL (SELECT site_id, row_number() OVER (ORDER BY site_id) - 1 AS k FROM study_sites WHERE study_id = $1) ss ON ss.k = i % $5`,
      [s.id, cohort.id, teacher, classrooms, sites],
    );
    await db.query(`INSERT INTO score_sheets (study_id, classroom_id, wave_id, measure_id, state) SELECT $1, id, $2, $3, 'accepted' FROM classrooms WHERE study_id = $1`, [s.id, w.id, m.id]);
    return { studyId: s.id as string, measureId: m.id as string, waveId: w.id as string };
  }

  return {
    url: url.toString(),
    db,
    app,
    logger,
    lead,
    study,
    async close() {
      await jobs.stop();
      await db.destroy();
    },
  };
}

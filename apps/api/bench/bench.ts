// API benchmarks, each reported as a ratio to a baseline measured in the same run (never a timed test):
// 1. a 100 000-row CSV uploaded through the real route, against COPY of the same rows;
// 2. a full confirmatory run over 2 000 000 scores in ~8 000 classrooms, against one bare aggregate scan.
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import request from 'supertest';
import { createApp } from '../src/app.js';
import { loadConfig } from '../src/config.js';
import { createDataSource } from '../src/db/data-source.js';
import { startQueue } from '../src/jobs/queue.js';
import { createLogger } from '../src/logger.js';
import { createMailer } from '../src/mail/mailer.js';
import { executeRun, listComparisons } from '../src/runs/service.js';
import { DEMO_PASSWORD, seedDemo } from '../src/seed/demo.js';
import { loadSessionUser } from '../src/auth/service.js';

const url = process.env.BENCH_DATABASE_URL;
if (!url) throw new Error('run with `npm run bench -w apps/api`, which starts the database');
const admin = new URL(url);
admin.pathname = '/postgres';

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
async function time(fn: () => Promise<unknown>) {
  const t0 = performance.now();
  await fn();
  return performance.now() - t0;
}

async function freshDatabase() {
  const c = new pg.Client({ connectionString: admin.toString() });
  await c.connect();
  await c.query('DROP DATABASE IF EXISTS evenhand_bench WITH (FORCE)');
  await c.query('CREATE DATABASE evenhand_bench');
  await c.end();
}

await freshDatabase();
const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: url, LOG_LEVEL: 'silent', SMTP_PORT: '1' });
const logger = createLogger(config);
const db = createDataSource(url);
await db.initialize();
await db.runMigrations();
await db.transaction((m) => seedDemo(m));
const jobs = await startQueue(url, logger);
const app = createApp({ config, db, mailer: createMailer(config), logger, jobs });
const lead = (await loadSessionUser(db, (await db.query(`SELECT id FROM users WHERE email = 'lead@evenhand.test'`))[0].id))!;

/** A sealed study with one measure and an outcome wave open today, plus `classrooms` classrooms over `sites` sites. */
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

// 1. Upload -----------------------------------------------------------------------------------------------
console.log('benchmark data ready; uploading');
const ROWS = 100_000;
const one = await study(1, 1);
const [sheet] = await db.query(`UPDATE score_sheets SET state = 'open' WHERE study_id = $1 RETURNING id`, [one.studyId]);
const sheetId = sheet[0].id as string;
const lines = Array.from({ length: ROWS }, (_, i) => `S${String(i).padStart(6, '0')},${(i * 7919) % 1000}`);
const csv = Buffer.from(`student_code,score\n${lines.join('\n')}\n`);
const session = await request(app).post('/api/auth/login').send({ email: 'teacher1@evenhand.test', password: DEMO_PASSWORD });
const token = session.body.token as string;
await db.query(`CREATE TABLE bench_copy (student_code varchar(40), score numeric)`);

const uploadTimes: number[] = [];
const copyTimes: number[] = [];
let peakRss = 0;
const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 20);
for (let i = 0; i < 3; i++) {
  uploadTimes.push(
    await time(async () => {
      const res = await request(app).post(`/api/score-sheets/${sheetId}/upload?replace=true`).set('authorization', `Bearer ${token}`).attach('file', csv, 'scores.csv');
      if (res.status !== 200) throw new Error(`upload answered ${res.status}: ${JSON.stringify(res.body).slice(0, 300)}`);
    }),
  );
  await db.query('TRUNCATE bench_copy');
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  copyTimes.push(await time(() => pipeline(Readable.from([lines.join('\n') + '\n']), client.query(copyFrom(`COPY bench_copy FROM STDIN WITH (FORMAT csv)`)))));
  await client.end();
}
clearInterval(sampler);
const [{ n }] = await db.query(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1`, [sheetId]);
if (n !== ROWS) throw new Error(`expected ${ROWS} stored rows, found ${n}`);
console.log(`\nCSV upload of ${ROWS.toLocaleString('en-US')} rows through POST /api/score-sheets/:id/upload (median of 3)`);
console.log(`  COPY of the same rows:      ${median(copyTimes).toFixed(0)} ms`);
console.log(`  the upload route:           ${median(uploadTimes).toFixed(0)} ms`);
console.log(`  ratio:                      ${(median(uploadTimes) / median(copyTimes)).toFixed(2)}×   (goal ≤ 5×)`);
console.log(`  peak RSS during uploads:    ${(peakRss / 2 ** 20).toFixed(0)} MB (file ${(csv.length / 2 ** 20).toFixed(1)} MB; upload limit 10 MB)`);

// 2. A confirmatory run -------------------------------------------------------------------------------------
async function runBench(classrooms: number, perClass: number) {
  const s = await study(classrooms, Math.max(2, Math.round(classrooms / 80)));
  await db.query(
    `INSERT INTO students (study_id, student_code, classroom_id)
     SELECT $1, 'P' || c.k || '-' || j, c.id FROM (SELECT id, row_number() OVER () AS k FROM classrooms WHERE study_id = $1) c, generate_series(1, $2) j`,
    [s.studyId, perClass],
  );
  await db.query(
    `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study)
     SELECT sh.id, $1, st.classroom_id, $2, $3, st.student_code,
            round((500 + 100 * sqrt(-2 * ln(1 - random())) * cos(2 * pi() * random()) + CASE WHEN c.arm = 'intervention' THEN 20 ELSE 0 END)::numeric, 1), false
       FROM students st JOIN classrooms c ON c.id = st.classroom_id JOIN score_sheets sh ON sh.classroom_id = c.id
      WHERE st.study_id = $1`,
    [s.studyId, s.waveId, s.measureId],
  );
  await db.query('ANALYZE scores');
  const { items } = await listComparisons(db, lead, s.studyId);
  const runTimes: number[] = [];
  const scanTimes: number[] = [];
  let peak = 0;
  const base = process.memoryUsage().rss;
  for (let i = 0; i < 3; i++) {
    scanTimes.push(
      await time(() =>
        db.query(
          `SELECT c.arm, count(*), sum(x.score), sum(x.score * x.score) FROM scores x JOIN classrooms c ON c.id = x.classroom_id
            WHERE x.study_id = $1 AND x.wave_id = $2 AND x.measure_id = $3 GROUP BY c.arm`,
          [s.studyId, s.waveId, s.measureId],
        ),
      ),
    );
    const [run] = await db.query(`INSERT INTO runs (comparison_id, study_id, kind, plan_version) VALUES ($1, $2, 'confirmatory', 1) RETURNING id`, [items[0].id, s.studyId]);
    const watch = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss - base)), 10);
    runTimes.push(await time(() => executeRun(db, logger, run.id)));
    clearInterval(watch);
    const [done] = await db.query(`SELECT state, error FROM runs WHERE id = $1`, [run.id]);
    if (done.state !== 'finished') throw new Error(`bench run ${done.state}: ${done.error}`);
  }
  return { rows: classrooms * perClass, run: median(runTimes), scan: median(scanTimes), peak };
}

const small = await runBench(800, 250);
const large = await runBench(8000, 250);
for (const r of [small, large]) {
  console.log(`\nConfirmatory run over ${r.rows.toLocaleString('en-US')} scores (median of 3)`);
  console.log(`  bare aggregate scan:        ${r.scan.toFixed(0)} ms`);
  console.log(`  full run:                   ${r.run.toFixed(0)} ms`);
  console.log(`  ratio:                      ${(r.run / r.scan).toFixed(2)}×   (goal ≤ 4×)`);
  console.log(`  peak extra RSS during run:  ${(r.peak / 2 ** 20).toFixed(0)} MB`);
}
console.log(`\nmemory growth when the rows grow 10×: ${(large.peak / Math.max(small.peak, 1)).toFixed(2)}× the smaller run's peak extra RSS`);

await jobs.stop();
await db.destroy();

// A OneRoster bundle of 50 000 students in 2 000 classes (40 schools) imported through
// POST /api/studies/:id/roster-imports, against reading the same zip's files with the same zip reader and
// CSV parser alone (no database) in the same run: the goal is an import within 3× of parsing. Then the
// API process's peak extra heap + buffers (and RSS) while importing 5 000 and 50 000 students in the same 2 000 classes (goal: flat).
// The teachers and principals already have accounts, so each import offers the 2 000 teachers their school's role
// (an offer and its e-mail each, through the outbox, the newest replacing the open one; named set-wise by
// ensurePeople). The first import also makes the 34 schools the demo lacks and names their principals; it is timed
// and reported apart. The timed rounds import the same export into fresh studies, as a district's second study does.
import { writeFileSync, rmSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { oneRosterFiles, zipBundle, type BundleShape } from '../dev/oneroster-bundle.js';
import { csvStreamBatches } from '../src/lib/csv.js';
import { openBundle } from '../src/roster-imports/bundle.js';
import { ROSTER_COLUMNS } from '../src/roster-imports/parser.js';
import { DEMO_PASSWORD } from '../src/seed/demo.js';
import { median, openBench, time } from './setup.js';

const SHAPE: BundleShape = { schools: 40, classesPerSchool: 50, studentsPerClass: 25 };
const ROUNDS = 3;

export async function benchRosterImport() {
  const b = await openBench('roster');
  const { db, app } = b;
  const dir = mkdtempSync(path.join(tmpdir(), 'evenhand-roster-bench-'));
  const zipOf = (shape: BundleShape) => {
    const file = path.join(dir, `${shape.totalStudents ?? shape.studentsPerClass}.zip`);
    writeFileSync(file, zipBundle(oneRosterFiles(shape)));
    return file;
  };
  const large = zipOf(SHAPE);
  const small = zipOf({ ...SHAPE, totalStudents: 5_000 });

  // The teachers (and the schools' administrators) as existing accounts.
  await db.query(
    `INSERT INTO users (email, name, password_hash)
     SELECT 'teacher.' || lower(code) || k || '@roster.evenhand.test', 'Bench Teacher', NULL
       FROM (SELECT CASE WHEN s <= 6 THEN (ARRAY['ALD','BRK','CDH','DNP','ELR','FRN'])[s] ELSE 'SCH' || s END AS code FROM generate_series(1, $1) s) x, generate_series(1, $2) k
     UNION ALL
     SELECT 'principal.' || lower(CASE WHEN s <= 6 THEN (ARRAY['ALD','BRK','CDH','DNP','ELR','FRN'])[s] ELSE 'SCH' || s END) || '@roster.evenhand.test', 'Bench Principal', NULL
       FROM generate_series(1, $1) s`,
    [SHAPE.schools, SHAPE.classesPerSchool],
  );
  const session = await request(app).post('/api/auth/login').send({ email: 'coordinator@evenhand.test', password: DEMO_PASSWORD });
  const token = session.body.token as string;
  const newStudy = async () => (await b.study(0, 1)).studyId;
  const selection = {
    schools: Array.from({ length: SHAPE.schools }, (_, s) => `org-${(['ald', 'brk', 'cdh', 'dnp', 'elr', 'frn'][s] ?? `sch${s + 1}`)}`),
    classes: Array.from({ length: SHAPE.schools }, (_, s) => Array.from({ length: SHAPE.classesPerSchool }, (_, c) => `cls-${(['ald', 'brk', 'cdh', 'dnp', 'elr', 'frn'][s] ?? `sch${s + 1}`)}-${c + 1}`)).flat(),
  };
  const importInto = async (studyId: string, file: string) => {
    const res = await request(app)
      .post(`/api/studies/${studyId}/roster-imports`)
      .set('authorization', `Bearer ${token}`)
      .attach('files', file)
      .field('selection', JSON.stringify(selection));
    if (res.status !== 201) throw new Error(`import answered ${res.status}: ${JSON.stringify(res.body).slice(0, 500)}`);
    return res.body as { studentsJoined: number; classroomsCreated: number };
  };
  const parseAlone = async (file: string) => {
    const bundle = await openBundle([{ path: file, originalname: 'roster.zip' }]);
    let rows = 0;
    try {
      for (const name of ['orgs.csv', 'classes.csv', 'users.csv', 'enrollments.csv'] as const) {
        for await (const batch of csvStreamBatches(await bundle.open(name), ROSTER_COLUMNS[name].map((c) => c.toLowerCase()))) rows += batch.length;
      }
    } finally {
      bundle.close();
    }
    return rows;
  };

  const importTimes: number[] = [];
  const parseTimes: number[] = [];
  const firstStudy = await newStudy();
  const first = await time(() => importInto(firstStudy, large));
  for (let round = 0; round < ROUNDS; round++) {
    parseTimes.push(await time(() => parseAlone(large)));
    const studyId = await newStudy();
    let result: { studentsJoined: number; classroomsCreated: number } | undefined;
    importTimes.push(await time(async () => (result = await importInto(studyId, large))));
    if (result!.studentsJoined !== 50_000 || result!.classroomsCreated !== 2_000) throw new Error(`unexpected import: ${JSON.stringify(result)}`);
  }

  // Peak JavaScript heap + buffers above a collected floor (what the import allocates), and RSS for context.
  const extra = async (file: string) => {
    const studyId = await newStudy();
    globalThis.gc?.();
    const base = process.memoryUsage();
    const js = (m: NodeJS.MemoryUsage) => m.heapUsed + m.external + m.arrayBuffers;
    const peak = { js: 0, rss: 0 };
    const sampler = setInterval(() => {
      const m = process.memoryUsage();
      peak.js = Math.max(peak.js, js(m) - js(base));
      peak.rss = Math.max(peak.rss, m.rss - base.rss);
    }, 5);
    await importInto(studyId, file);
    clearInterval(sampler);
    return peak;
  };
  const smallExtra = await extra(small);
  const largeExtra = await extra(large);

  const mb = (x: number) => `${(x / 2 ** 20).toFixed(0)} MB`;
  const lines: [string, string][] = [
    ['parsing the files alone', `${median(parseTimes).toFixed(0)} ms`],
    ['the import route', `${median(importTimes).toFixed(0)} ms`],
    ['ratio to parsing alone', `${(median(importTimes) / median(parseTimes)).toFixed(2)}×   (goal ≤ 3×)`],
    ['first import (new schools and principals)', `${first.toFixed(0)} ms = ${(first / median(parseTimes)).toFixed(2)}× parsing`],
    ['peak extra heap + buffers, 5 000 students', `${mb(smallExtra.js)}   (RSS ${mb(smallExtra.rss)})`],
    ['peak extra heap + buffers, 50 000', `${mb(largeExtra.js)}   (RSS ${mb(largeExtra.rss)}; goal: flat${globalThis.gc ? '' : '; run with --expose-gc for steadier numbers'})`],
  ];
  console.log(`\nOneRoster import of 50 000 students in 2 000 classes of known teachers through POST /api/studies/:id/roster-imports (median of ${ROUNDS})`);
  for (const [label, value] of lines) console.log(`  ${`${label}:`.padEnd(44)}${value}`);
  rmSync(dir, { recursive: true, force: true });
  await b.close();
}

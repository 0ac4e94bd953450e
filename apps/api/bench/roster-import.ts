// A OneRoster bundle of 50 000 students in 2 000 classes (40 schools) imported through
// POST /api/studies/:id/roster-imports, against reading the same zip's files with the same zip reader and
// CSV parser alone (no database) in the same run: the goal is an import within 3× of parsing. Then the
// API process's memory while importing 5 000 and 50 000 students in the same 2 000 classes (goal: flat; see `memory`).
// The teachers and principals already have accounts with an open offer of their school's role from the first import,
// which stands (no second offer or e-mail; looked up set-wise by ensurePeople). The first import also makes the 34 schools the demo lacks and names their principals; it is timed
// and reported apart. The timed rounds import the same export into fresh studies, as a district's second study does.
import { execFile } from 'node:child_process';
import { once } from 'node:events';
import { writeFileSync, rmSync, mkdtempSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import request from 'supertest';
import { oneRosterFiles, zipBundle, type BundleShape } from '../dev/oneroster-bundle.js';
import { csvStreamBatches } from '../src/lib/csv.js';
import { openBundle } from '../src/roster-imports/bundle.js';
import { ROSTER_COLUMNS } from '../src/roster-imports/parser.js';
import { DEMO_PASSWORD } from '../src/seed/demo.js';
import { median, openBench, time } from './setup.js';

const SHAPE: BundleShape = { schools: 40, classesPerSchool: 50, studentsPerClass: 25 };
const ROUNDS = 3;
const run = promisify(execFile);
/** A client in a process of its own: posts the zip (streamed from disk) and the choice, prints the status. */
const UPLOADER = `
  const [url, token, file, selection] = process.argv.slice(1);
  const { openAsBlob } = await import('node:fs');
  const form = new FormData();
  form.append('files', await openAsBlob(file), 'roster.zip');
  form.append('selection', selection);
  const res = await fetch(url, { method: 'POST', headers: { authorization: 'Bearer ' + token }, body: form });
  process.stdout.write(String(res.status));`;

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

  // The API process's memory while importing. The upload comes from another process, so the request body a client
  // holds is not counted. Peak: heap + buffers above a collected floor, sampled every 5 ms, counting garbage V8 has not
  // collected yet (how much that is depends on when V8 collects, which grows with what an import allocates, not with
  // what it keeps). Held: the same import again with a full collection before each sample (every 20 ms), i.e. the
  // memory the import keeps alive; that is what must not grow with the export.
  if (!globalThis.gc) throw new Error('run with --expose-gc (npm run bench does)');
  const server = app.listen(0, '127.0.0.1');
  await once(server, 'listening');
  const { port } = server.address() as AddressInfo;
  const uploadFromAnotherProcess = async (studyId: string, file: string) => {
    const { stdout } = await run(process.execPath, ['--input-type=module', '-e', UPLOADER, `http://127.0.0.1:${port}/api/studies/${studyId}/roster-imports`, token, file, JSON.stringify(selection)]);
    if (stdout !== '201') throw new Error(`import answered ${stdout}`);
  };
  const memory = async (file: string, held: boolean) => {
    const studyId = await newStudy();
    globalThis.gc!();
    const base = process.memoryUsage();
    const js = (m: NodeJS.MemoryUsage) => m.heapUsed + m.external + m.arrayBuffers;
    const peak = { js: 0, rss: 0 };
    const sampler = setInterval(
      () => {
        if (held) globalThis.gc!();
        const m = process.memoryUsage();
        peak.js = Math.max(peak.js, js(m) - js(base));
        peak.rss = Math.max(peak.rss, m.rss - base.rss);
      },
      held ? 20 : 5,
    );
    await uploadFromAnotherProcess(studyId, file);
    clearInterval(sampler);
    return peak;
  };
  const sizes = { small: { peak: await memory(small, false), held: await memory(small, true) }, large: { peak: await memory(large, false), held: await memory(large, true) } };
  server.close();

  const mb = (x: number) => `${(x / 2 ** 20).toFixed(0)} MB`;
  const lines: [string, string][] = [
    ['parsing the files alone', `${median(parseTimes).toFixed(0)} ms`],
    ['the import route', `${median(importTimes).toFixed(0)} ms`],
    ['ratio to parsing alone', `${(median(importTimes) / median(parseTimes)).toFixed(2)}×   (goal ≤ 3×)`],
    ['first import (new schools and principals)', `${first.toFixed(0)} ms = ${(first / median(parseTimes)).toFixed(2)}× parsing`],
    ['held heap + buffers, 5 000 students', `${mb(sizes.small.held.js)}`],
    ['held heap + buffers, 50 000', `${mb(sizes.large.held.js)}   (goal: flat, no more than the 5 000 import's and a few MB of noise)`],
    ['peak with uncollected garbage, 5 000', `${mb(sizes.small.peak.js)}   (RSS ${mb(sizes.small.peak.rss)})`],
    ['peak with uncollected garbage, 50 000', `${mb(sizes.large.peak.js)}   (RSS ${mb(sizes.large.peak.rss)})`],
  ];
  console.log(`\nOneRoster import of 50 000 students in 2 000 classes of known teachers through POST /api/studies/:id/roster-imports (median of ${ROUNDS})`);
  for (const [label, value] of lines) console.log(`  ${`${label}:`.padEnd(44)}${value}`);
  rmSync(dir, { recursive: true, force: true });
  await b.close();
}

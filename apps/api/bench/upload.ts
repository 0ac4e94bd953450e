// A 100 000-row CSV uploaded through POST /api/score-sheets/:id/upload into an empty sheet, against COPY of
// the same rows in the same run. Two baselines: COPY into a table with the scores table's columns, keys and
// indexes (what storing these rows costs the database at all; the goal is stated against it) and COPY into
// a bare two-column table (the floor, for context).
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import request from 'supertest';
import { DEMO_PASSWORD } from '../src/seed/demo.js';
import { median, openBench, time } from './setup.js';

const ROWS = 100_000;
const ROUNDS = 3;

export async function benchUpload() {
  const b = await openBench('upload');
  const { db, app } = b;
  // One classroom per round, so every upload writes a fresh sheet (a teacher's first upload).
  const s = await b.study(ROUNDS, 1);
  // An UPDATE … RETURNING answers [rows, count] through TypeORM.
  const [sheets]: [{ id: string; classroom_id: string }[], number] = await db.query(
    `UPDATE score_sheets SET state = 'open' WHERE study_id = $1 RETURNING id, classroom_id`,
    [s.studyId],
  );
  const session = await request(app).post('/api/auth/login').send({ email: 'teacher1@evenhand.test', password: DEMO_PASSWORD });
  const token = session.body.token as string;
  await db.query(`CREATE TABLE bench_like_scores (LIKE scores INCLUDING ALL)`);
  await db.query(`CREATE TABLE bench_bare (student_code varchar(40), score numeric)`);

  const uploadTimes: number[] = [];
  const likeTimes: number[] = [];
  const bareTimes: number[] = [];
  let peakRss = 0;
  let fileBytes = 0;
  const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 20);
  for (const [round, sheet] of sheets.entries()) {
    const codes = Array.from({ length: ROWS }, (_, i) => `R${round}-${String(i).padStart(6, '0')}`);
    const scores = codes.map((_, i) => (i * 7919) % 1000);
    const csv = Buffer.from(`student_code,score\n${codes.map((c, i) => `${c},${scores[i]}`).join('\n')}\n`);
    fileBytes = csv.length;
    uploadTimes.push(
      await time(async () => {
        const res = await request(app).post(`/api/score-sheets/${sheet.id}/upload`).set('authorization', `Bearer ${token}`).attach('file', csv, 'scores.csv');
        if (res.status !== 200) throw new Error(`upload answered ${res.status}: ${JSON.stringify(res.body).slice(0, 300)}`);
      }),
    );
    const [{ n }] = await db.query(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1`, [sheet.id]);
    if (n !== ROWS) throw new Error(`expected ${ROWS} stored rows, found ${n}`);

    const client = new pg.Client({ connectionString: b.url });
    await client.connect();
    const like = codes.map((c, i) => `${sheet.id},${s.studyId},${sheet.classroom_id},${s.waveId},${s.measureId},${c},${scores[i]},f,""`).join('\n') + '\n';
    likeTimes.push(await time(() => pipeline(Readable.from([like]), client.query(copyFrom(`COPY bench_like_scores FROM STDIN WITH (FORMAT csv)`)))));
    const bare = codes.map((c, i) => `${c},${scores[i]}`).join('\n') + '\n';
    bareTimes.push(await time(() => pipeline(Readable.from([bare]), client.query(copyFrom(`COPY bench_bare FROM STDIN WITH (FORMAT csv)`)))));
    await client.end();
  }
  clearInterval(sampler);

  const upload = median(uploadTimes);
  console.log(`\nCSV upload of ${ROWS.toLocaleString('en-US')} rows into an empty sheet through POST /api/score-sheets/:id/upload (median of ${ROUNDS})`);
  console.log(`  COPY into a table shaped like scores: ${median(likeTimes).toFixed(0)} ms`);
  console.log(`  COPY into a bare two-column table:    ${median(bareTimes).toFixed(0)} ms`);
  console.log(`  the upload route:                     ${upload.toFixed(0)} ms`);
  console.log(`  ratio to COPY into the scores shape:  ${(upload / median(likeTimes)).toFixed(2)}×   (goal ≤ 5×)`);
  console.log(`  ratio to COPY into the bare table:    ${(upload / median(bareTimes)).toFixed(2)}×`);
  console.log(`  peak RSS during uploads:              ${(peakRss / 2 ** 20).toFixed(0)} MB (file ${(fileBytes / 2 ** 20).toFixed(1)} MB; upload limit 10 MB)`);
  await b.close();
}

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
  // One classroom per upload, so every upload writes a fresh sheet (a teacher's first upload); two more for memory.
  const s = await b.study(ROUNDS + 2, 1);
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
  const csvOf = (round: number, rows: number) => {
    const codes = Array.from({ length: rows }, (_, i) => `R${round}-${String(i).padStart(6, '0')}`);
    const scores = codes.map((_, i) => (i * 7919) % 1000);
    return { codes, scores, csv: Buffer.from(`student_code,score\n${codes.map((c, i) => `${c},${scores[i]}`).join('\n')}\n`) };
  };
  const post = async (sheetId: string, csv: Buffer) => {
    const res = await request(app).post(`/api/score-sheets/${sheetId}/upload`).set('authorization', `Bearer ${token}`).attach('file', csv, 'scores.csv');
    if (res.status !== 200) throw new Error(`upload answered ${res.status}: ${JSON.stringify(res.body).slice(0, 300)}`);
  };
  let fileBytes = 0;
  for (const [round, sheet] of sheets.slice(0, ROUNDS).entries()) {
    const { codes, scores, csv } = csvOf(round, ROWS);
    fileBytes = csv.length;
    uploadTimes.push(await time(() => post(sheet.id, csv)));
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

  // Memory: the process's extra RSS while uploading a file 10× smaller, then the full one, each into a fresh sheet.
  const extraRss = async (sheetId: string, csv: Buffer) => {
    globalThis.gc?.();
    const base = process.memoryUsage().rss;
    let peak = 0;
    const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss - base)), 5);
    await post(sheetId, csv);
    clearInterval(sampler);
    return Math.max(peak, process.memoryUsage().rss - base);
  };
  const smallExtra = await extraRss(sheets[ROUNDS].id, csvOf(ROUNDS, ROWS / 10).csv);
  const largeExtra = await extraRss(sheets[ROUNDS + 1].id, csvOf(ROUNDS + 1, ROWS).csv);

  const upload = median(uploadTimes);
  const mb = (x: number) => `${(x / 2 ** 20).toFixed(0)} MB`;
  const lines: [string, string][] = [
    ['COPY into a table shaped like scores', `${median(likeTimes).toFixed(0)} ms`],
    ['COPY into a bare two-column table', `${median(bareTimes).toFixed(0)} ms`],
    ['the upload route', `${upload.toFixed(0)} ms`],
    ['ratio to COPY into the scores shape', `${(upload / median(likeTimes)).toFixed(2)}×   (goal ≤ 5×)`],
    ['ratio to COPY into the bare table', `${(upload / median(bareTimes)).toFixed(2)}×`],
    [`extra RSS, ${(ROWS / 10).toLocaleString('en-US')} rows`, mb(smallExtra)],
    [`extra RSS, ${ROWS.toLocaleString('en-US')} rows (${(fileBytes / 2 ** 20).toFixed(1)} MB)`, `${mb(largeExtra)}   (upload limit 10 MB${globalThis.gc ? '' : '; run with --expose-gc for steadier numbers'})`],
  ];
  console.log(`\nCSV upload of ${ROWS.toLocaleString('en-US')} rows into an empty sheet through POST /api/score-sheets/:id/upload (median of ${ROUNDS})`);
  for (const [label, value] of lines) console.log(`  ${`${label}:`.padEnd(40)}${value}`);
  await b.close();
}

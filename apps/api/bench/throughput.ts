// Requests a second at 50 connections of two reads people make all day, each as a ratio to a bare Express
// handler answering the same JSON in the same run: `GET /api/runs/:id` of a locked run (a results page) and
// `GET /api/auth/me` (every page load checks the session). autocannon runs in a worker thread so it does not
// share the server's event loop. The bare handler is served as the API is (`listenOnOwnPrototypes`), so the ratio is
// what the API's own work costs. The two are measured in alternating rounds, so a busy spell of a shared machine
// falls on both. Goal: both ≥ 50 %.
import { once } from 'node:events';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import autocannon from 'autocannon';
import express from 'express';
import request from 'supertest';
import { listenOnOwnPrototypes } from '../src/http/listen.js';
import { listComparisons } from '../src/runs/comparisons.js';
import { executeRun } from '../src/runs/service.js';
import { storeSheetDigestsAndSums } from '../src/score-sheets/sums.js';
import { DEMO_PASSWORD } from '../src/seed/demo.js';
import { openBench } from './setup.js';

const CONNECTIONS = 50;
/** Rounds of each, alternating with the bare handler. */
const ROUNDS = 3;
const SECONDS = 2;

async function listen(app: express.Express): Promise<{ server: Server; url: string }> {
  const server = app.listen(0, '127.0.0.1');
  await once(server, 'listening');
  return { server, url: `http://127.0.0.1:${(server.address() as AddressInfo).port}` };
}

/** Requests a second at 50 connections; every answer must be a 200, or the figure means nothing. */
async function requestsPerSecond(url: string, headers: Record<string, string>, seconds: number): Promise<number> {
  const result = await autocannon({ url, headers, connections: CONNECTIONS, duration: seconds, workers: 1 });
  const other = result.non2xx + result.errors + result.timeouts;
  if (other > 0) throw new Error(`${url}: ${other} of ${result.requests.total} answers were not 200`);
  return result.requests.average;
}

/** The same JSON body from a bare Express handler: the floor of what any Express route can serve. */
async function bareHandler(body: unknown): Promise<{ server: Server; url: string }> {
  const bare = express();
  listenOnOwnPrototypes(bare);
  bare.get('/', (_req, res) => {
    res.json(body);
  });
  return listen(bare);
}

/** The API's rate and the bare handler's, each the mean of `ROUNDS` alternating rounds after a warm-up. */
async function rates(api: string, bare: string, headers: Record<string, string>): Promise<{ rate: number; floor: number }> {
  await requestsPerSecond(bare, {}, 1);
  await requestsPerSecond(api, headers, 1);
  let floor = 0;
  let rate = 0;
  for (let i = 0; i < ROUNDS; i++) {
    floor += (await requestsPerSecond(bare, {}, SECONDS)) / ROUNDS;
    rate += (await requestsPerSecond(api, headers, SECONDS)) / ROUNDS;
  }
  return { rate, floor };
}

export async function benchThroughput() {
  const b = await openBench('throughput');
  const { db, lead } = b;
  // A locked confirmatory run over 40 classrooms of 25 students.
  const s = await b.study(40, 5);
  await db.query(
    `INSERT INTO students (study_id, student_code, classroom_id)
     SELECT $1, 'T' || c.k || '-' || j, c.id FROM (SELECT id, row_number() OVER () AS k FROM classrooms WHERE study_id = $1) c, generate_series(1, 25) j`,
    [s.studyId],
  );
  await db.query(
    `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study)
     SELECT sh.id, $1, st.classroom_id, $2, $3, st.student_code, 400 + (abs(hashtext(st.student_code)) % 200) + CASE WHEN c.arm = 'intervention' THEN 15 ELSE 0 END, false
       FROM students st JOIN classrooms c ON c.id = st.classroom_id JOIN score_sheets sh ON sh.classroom_id = c.id WHERE st.study_id = $1`,
    [s.studyId, s.waveId, s.measureId],
  );
  const sheetIds: string[] = (await db.query(`SELECT id FROM score_sheets WHERE study_id = $1`, [s.studyId])).map((r: { id: string }) => r.id);
  await storeSheetDigestsAndSums(db.manager, sheetIds);
  const comparisonId = (await listComparisons(db, lead, s.studyId)).items[0].id;
  const [{ id: runId }] = await db.query(`INSERT INTO runs (comparison_id, study_id, kind, plan_version) VALUES ($1, $2, 'confirmatory', 1) RETURNING id`, [comparisonId, s.studyId]);
  await executeRun(db, b.logger, runId);
  // What locking does to the rows (the lock route also writes the audit entry and the principals' digests).
  await db.query(`UPDATE score_sheets SET locked = true WHERE id = ANY($1)`, [sheetIds]);
  await db.query(`UPDATE runs SET state = 'locked', locked_at = now(), locked_by = $2 WHERE id = $1`, [runId, lead.id]);

  const { server, url } = await listen(b.app);
  try {
    const signIn = await request(b.app).post('/api/auth/login').send({ email: 'lead@evenhand.test', password: DEMO_PASSWORD });
    const headers = { authorization: `Bearer ${signIn.body.token}` };
    const runPath = `/api/runs/${runId}`;
    const me = await request(b.app).get('/api/auth/me').set(headers);
    const run = await request(b.app).get(runPath).set(headers);
    if (me.status !== 200 || run.status !== 200) throw new Error(`bench set-up: /auth/me ${me.status}, ${runPath} ${run.status}`);

    console.log(
      `\nAPI throughput at ${CONNECTIONS} connections, ${ROUNDS} rounds of ${SECONDS} s each, against a bare Express handler answering the same JSON (goal ≥ 50 %):`,
    );
    for (const [name, path, body] of [
      ['GET /api/runs/:id (locked run)', runPath, run.body],
      ['GET /api/auth/me', '/api/auth/me', me.body],
    ] as const) {
      const bytes = Buffer.byteLength(JSON.stringify(body));
      const bare = await bareHandler(body);
      const { rate, floor } = await rates(url + path, bare.url, headers).finally(() => {
        bare.server.closeAllConnections();
        bare.server.close();
      });
      console.log(
        `  ${name.padEnd(32)} ${Math.round(rate).toString().padStart(6)} req/s vs bare ${Math.round(floor).toString().padStart(6)} req/s (${bytes} B): ${((100 * rate) / floor).toFixed(0)} %`,
      );
    }
  } finally {
    server.closeAllConnections();
    server.close();
    // Handlers still in flight when the load stopped finish before the database closes.
    await new Promise((resolve) => setTimeout(resolve, 1000));
    await b.close();
  }
}

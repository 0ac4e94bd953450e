import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decidingTest } from '@evenhand/entities';
import { ancova, hedgesG, levene, mannWhitney, mergeAllSummaries, sampleRanks, shapiroWilk, welchT, welchTFromSummary, studentT, type Summary } from '@evenhand/stats';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, send, type StudySetup } from '../../test/fixtures.js';
import { startQueue } from '../jobs/queue.js';
import { storeSheetDigestsAndSums } from '../score-sheets/sums.js';
import { startWorkers } from '../jobs/workers.js';
import { createLogger } from '../logger.js';

let t: TestApp;
let s: StudySetup;
let reviewer: SignedIn;
const values: Record<string, number[]> = { intervention: [], comparison: [] };
const pairs: { arm: number; y: number; x: number }[] = [];

const fill = (classroomId: string, waveId: string, measureId: string, scores: (number | null)[], codePrefix: string) =>
  fillSheet(t.db, { classroomId, waveId, measureId }, scores, codePrefix);

async function waitFor(runId: string, who: SignedIn, states = ['finished', 'failed']) {
  for (let i = 0; i < 100; i++) {
    const res = await who.agent.get(`/api/runs/${runId}`);
    if (states.includes(res.body.state)) return res.body;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`run ${runId} did not finish`);
}

let primaryComparison: string;

/** The bundle's rows as fields; `outcome` and `pretest` are null where the line leaves them empty. */
function parseRows(rows: string[]) {
  return rows.map((line) => {
    const [classroomId, arm, code, outcome, pretest] = line.split(',');
    return { classroomId, arm, code, outcome: outcome === '' ? null : Number(outcome), pretest: pretest === '' ? null : Number(pretest), line };
  });
}

/** The students analysed, from the bundle: those with an outcome. */
const analysed = (rows: string[]) => parseRows(rows).filter((r) => r.outcome !== null);

/** The data hash from the bundle alone, as its README says: per classroom an outcome and a pretest digest, then the summaries. */
function bundleHash(rows: string[], summaries: string[]): string {
  const sha = (lines: string[]) => createHash('sha256').update(lines.join('\n')).digest('hex');
  const digest = (lines: string[]) => (lines.length ? sha(lines) : '');
  const groups: string[][] = [];
  for (const line of rows) {
    const last = groups.at(-1);
    if (last && last[0].split(',')[0] === line.split(',')[0]) last.push(line);
    else groups.push([line]);
  }
  const classroomLines = groups.map((lines) => {
    const [classroomId, arm] = lines[0].split(',');
    const fields = lines.map((l) => l.split(','));
    const outcome = digest(fields.filter((f) => f[3] !== '').map((f) => `${f[2]},${f[3]}`));
    const pretest = digest(fields.filter((f) => f[4] !== '').map((f) => `${f[2]},${f[4]}`));
    return `${classroomId},${arm},${outcome},${pretest}`;
  });
  return sha([...classroomLines, ...summaries]);
}

beforeAll(async () => {
  t = await startTestApp({ workers: true });
  s = await createStudy(t.app);
  await send(s.lead, 'post', `/api/studies/${s.studyId}/measures`, { name: 'Extra', minScore: 0, maxScore: 10 }, 409); // sealed: no new measures
  const { classrooms } = await enrolClassrooms(s, 2, 4);
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'runs-test', commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200); // creates the score sheets
  const arms: { id: string; arm: string }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY name, id`, [s.studyId]);
  let k = 0;
  for (const c of classrooms) {
    const arm = arms.find((a) => a.id === c.id)!.arm;
    // Deterministic, varied scores with a modest difference between arms and one leaver per classroom.
    const pre = Array.from({ length: 12 }, (_, i) => 60 + ((i * 37 + k * 11) % 41));
    const post = pre.map((p, i) => (i === 11 ? null : Math.round((p * 0.8 + 25 + (arm === 'intervention' ? 6 : 0) + ((i * 13 + k * 7) % 17) - 8) * 10) / 10));
    await fill(c.id, s.baselineId, s.measureId, pre, `K${k}`);
    await fill(c.id, s.outcomeId, s.measureId, post, `K${k}`);
    values[arm].push(...(post.filter((v) => v !== null) as number[]));
    post.forEach((y, i) => y !== null && pairs.push({ arm: arm === 'intervention' ? 1 : 0, y, x: pre[i] }));
    k++;
  }
  reviewer = await signIn(t.app, 'reviewer@evenhand.test');
  const list = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
  primaryComparison = list.find((c: { isPrimary: boolean }) => c.isPrimary).id;
});
afterAll(() => t.close());

describe('comparison runs', () => {
  it('lists the sealed plan’s comparison as pre-specified and primary', async () => {
    const list = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body;
    expect(list.items).toHaveLength(1);
    expect(list.items[0]).toMatchObject({ prespecified: true, isPrimary: true, primaryTest: 'welch', covariate: 'baseline', latestRun: null });
  });

  let runId: string;
  it('queues a confirmatory run (202) that a worker computes with the engine’s own numbers', async () => {
    const res = await s.lead.agent.post(`/api/comparisons/${primaryComparison}/runs`).set('x-csrf-token', s.lead.csrf).send({ kind: 'confirmatory' });
    expect(res.status).toBe(202);
    expect(res.body.run.state).toBe('queued');
    runId = res.body.run.id;
    const run = await waitFor(runId, s.lead);
    expect(run.state).toBe('finished');
    const r = run.results;
    // The engine is checked against SciPy in packages/stats; here the run must equal it on the raw rows.
    const w = welchT(values.intervention, values.comparison);
    expect(r.primary.t).toBeCloseTo(w.t, 9);
    expect(r.primary.df).toBeCloseTo(w.df, 9);
    expect(r.primary.p).toBeCloseTo(w.p, 12);
    expect(r.sensitivity.student.t).toBeCloseTo(studentT(values.intervention, values.comparison).t, 9);
    expect(r.effectSize.g).toBeCloseTo(hedgesG(values.intervention, values.comparison).g, 9);
    expect(r.descriptives.map((d: { students: number }) => d.students)).toEqual([values.intervention.length, values.comparison.length]);
    expect(r.clustering).toMatchObject({ iccSource: 'default', icc: 0.2 });
    expect(r.sensitivity.ancova.n).toBe(values.intervention.length + values.comparison.length);
    expect(r.sites).toHaveLength(2);
    expect(r.pooled).not.toBeNull();
    expect(r.diagnostics.leveneMedian.df2).toBe(values.intervention.length + values.comparison.length - 2);
    expect(r.cautions.join(' ')).toMatch(/not the size or the importance/);
    // The checks SQL aggregates over distinct scores equal the engine on the rows (each checked against SciPy in packages/stats).
    const mw = mannWhitney(values.intervention, values.comparison);
    expect(r.sensitivity.mannWhitney).toMatchObject({ u: mw.u, method: mw.method });
    expect(r.sensitivity.mannWhitney.p).toBeCloseTo(mw.p, 12);
    for (const center of ['mean', 'median'] as const) {
      const l = levene([values.intervention, values.comparison], { center });
      const got = center === 'mean' ? r.diagnostics.leveneMean : r.diagnostics.leveneMedian;
      expect(got.statistic).toBeCloseTo(l.statistic, 10);
      expect(got.p).toBeCloseTo(l.p, 12);
    }
    const adj = ancova(pairs.map((q) => q.y), pairs.map((q) => q.arm), pairs.map((q) => q.x));
    expect(r.sensitivity.ancova.adjustedDifference).toBeCloseTo(adj.adjustedDifference, 9);
    expect(r.sensitivity.ancova.se).toBeCloseTo(adj.se, 9);
    expect(r.sensitivity.ancova.p).toBeCloseTo(adj.p, 12);
    expect(r.sensitivity.ancova.g).toBeCloseTo(adj.g, 10);
    for (const [i, arm] of (['intervention', 'comparison'] as const).entries()) {
      const sw = shapiroWilk(values[arm]);
      expect(r.diagnostics.shapiroWilk[i]).toMatchObject({ arm, n: values[arm].length });
      expect(r.diagnostics.shapiroWilk[i].w).toBeCloseTo(sw.w, 12);
      // Quartiles as linear interpolation between order statistics (Hyndman & Fan 1996, definition 7).
      const sorted = [...values[arm]].sort((a, b) => a - b);
      const at = (f: number) => {
        const pos = f * (sorted.length - 1);
        const lo = Math.floor(pos);
        return sorted[lo] + (sorted[Math.ceil(pos)] - sorted[lo]) * (pos - lo);
      };
      expect(r.descriptives[i].quantiles).toEqual({ min: sorted[0], q1: at(0.25), median: at(0.5), q3: at(0.75), max: sorted[sorted.length - 1] });
    }
    expect(run.dataSha256).toMatch(/^[0-9a-f]{64}$/);
    // Classrooms were assigned and students compared: the clustering-corrected p decides, in the multiplicity step too.
    expect(decidingTest(r)).toMatchObject({ analysis: 'clustering-corrected', basis: 'clustering', p: r.clustering.p, significant: r.clustering.p < r.alpha });
    expect(run.multiplicity).toMatchObject({ comparisons: 1, adjustedP: r.clustering.p });
  });

  it('lists the latest finished run beside the latest run, so a failed or waiting newest run does not hide the results', async () => {
    let [k] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
    expect(k).toMatchObject({ latestFinishedRunId: runId, latestRun: { id: runId, state: 'finished' } });
    // A newer run that no worker will take (no job), as if the queue were slow.
    const [waiting] = await t.db.query(`INSERT INTO runs (comparison_id, study_id, kind, plan_version) VALUES ($1, $2, 'monitoring', 1) RETURNING id`, [primaryComparison, s.studyId]);
    [k] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
    expect(k).toMatchObject({ latestFinishedRunId: runId, latestRun: { id: waiting.id, state: 'queued' } });
    await t.db.query(`UPDATE runs SET state = 'failed', error = 'test' WHERE id = $1`, [waiting.id]);
    [k] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
    expect(k).toMatchObject({ latestFinishedRunId: runId, latestRun: { id: waiting.id, state: 'failed' } });
  });

  it('gives a bundle whose rows hash to the run’s data hash and recompute the same primary result', async () => {
    const res = await reviewer.agent.get(`/api/runs/${runId}/bundle`);
    expect(res.headers['cache-control']).toBe('no-store'); // student-level rows: never stored by a browser or a proxy
    const bundle = res.body;
    expect(bundleHash(bundle.rows, bundle.summaries)).toBe(bundle.dataSha256);
    expect(bundle.rows).toEqual([...bundle.rows].sort((a: string, b: string) => Buffer.compare(Buffer.from(a), Buffer.from(b))));
    const byArm: Record<string, number[]> = { intervention: [], comparison: [] };
    for (const r of analysed(bundle.rows)) {
      expect(r.code).toMatch(/^K\d+-\d+$/);
      byArm[r.arm].push(r.outcome!);
    }
    // Each classroom's leaver has a pretest and no outcome: in the rows (their pretest is hashed), not analysed.
    expect(parseRows(bundle.rows).filter((r) => r.outcome === null && r.pretest !== null)).toHaveLength(8);
    const again = welchT(byArm.intervention, byArm.comparison);
    expect(again.t).toBeCloseTo(bundle.results.primary.t, 10);
    expect(bundle.plan.version).toBe(1);
    expect(bundle.draw.seed).toBe('runs-test');
    expect(bundle.readme).toMatch(/SHA-256/);
    // The README describes every part of the bundle beyond its identity (run, comparison, engine version, data hash).
    const identity = ['readme', 'run', 'comparison', 'engineVersion', 'dataSha256'];
    const parts = Object.keys(bundle).filter((key) => !identity.includes(key));
    expect(parts).toContain('evidence');
    expect(parts.filter((key) => !bundle.readme.includes(`- ${key}:`))).toEqual([]);
  });

  it('computes the same from the digests and sums stored when sheets are accepted as from the rows, and forgets them when a score changes', async () => {
    const first = (await s.lead.agent.get(`/api/runs/${runId}`)).body;
    // The fixture wrote the rows directly, so that run hashed every sheet itself; now store them as accepting does.
    const sheetIds: string[] = (await t.db.query(`SELECT id FROM score_sheets WHERE study_id = $1`, [s.studyId])).map((r: { id: string }) => r.id);
    await storeSheetDigestsAndSums(t.db.manager, sheetIds);
    const stored = await t.db.query(`SELECT count(*)::int AS n FROM score_sheets WHERE study_id = $1 AND rows_sha256 IS NOT NULL`, [s.studyId]);
    expect(stored[0].n).toBe(sheetIds.length);
    const summed = await t.db.query(`SELECT count(*)::int AS n, count(pretest_sheet_id)::int AS paired FROM sheet_sums WHERE sheet_id = ANY($1)`, [sheetIds]);
    // Every sheet has its sums; each outcome sheet (half of them) names its classroom's baseline sheet.
    expect(summed[0]).toEqual({ n: sheetIds.length, paired: sheetIds.length / 2 });
    const queued = await send(s.lead, 'post', `/api/comparisons/${primaryComparison}/runs`, { kind: 'monitoring' }, 202);
    const second = await waitFor(queued.run.id, s.lead);
    expect(second.state).toBe('finished');
    expect(second.dataSha256).toBe(first.dataSha256);
    expect(second.results.primary).toEqual(first.results.primary);
    expect(second.results.sensitivity.ancova).toEqual(first.results.sensitivity.ancova);
    expect(second.results.descriptives).toEqual(first.results.descriptives);
    expect(second.results.accounting.arms).toEqual(first.results.accounting.arms);

    // Any write to a sheet's scores, even one that changes no value, clears its stored digest in the same statement.
    const [one] = await t.db.query(`SELECT sheet_id FROM scores WHERE study_id = $1 AND wave_id = $2 LIMIT 1`, [s.studyId, s.outcomeId]);
    await t.db.query(`UPDATE scores SET score = score WHERE sheet_id = $1`, [one.sheet_id]);
    const [cleared] = await t.db.query(`SELECT rows_sha256 FROM score_sheets WHERE id = $1`, [one.sheet_id]);
    expect(cleared.rows_sha256).toBeNull();
    expect(await t.db.query(`SELECT 1 FROM sheet_sums WHERE sheet_id = $1`, [one.sheet_id])).toHaveLength(0);
    // A write to a baseline sheet forgets the sums of the outcome sheet paired with it.
    const [paired] = await t.db.query(`SELECT sheet_id, pretest_sheet_id FROM sheet_sums WHERE pretest_sheet_id IS NOT NULL LIMIT 1`);
    await t.db.query(`UPDATE scores SET note = note WHERE sheet_id = $1`, [paired.pretest_sheet_id]);
    expect(await t.db.query(`SELECT 1 FROM sheet_sums WHERE sheet_id = $1 OR sheet_id = $2`, [paired.sheet_id, paired.pretest_sheet_id])).toHaveLength(0);
  });

  it('hides unlocked runs from principals', async () => {
    const principal = await signIn(t.app, 'principal1@evenhand.test');
    expect((await principal.agent.get(`/api/runs/${runId}`)).status).toBe(404);
  });

  it('locks the run: inputs frozen in the API and in the database; a re-analysis needs a reason and stays unlocked', async () => {
    const locked = await send(s.lead, 'post', `/api/runs/${runId}/lock`, {}, 200);
    expect(locked.state).toBe('locked');
    expect((await s.lead.agent.post(`/api/runs/${runId}/lock`).set('x-csrf-token', s.lead.csrf)).status).toBe(409);
    await expect(t.db.query(`UPDATE runs SET results = '{}' WHERE id = $1`, [runId])).rejects.toThrow(/locked and cannot change/);
    await expect(t.db.query(`UPDATE scores SET score = 0 WHERE study_id = $1 AND wave_id = $2`, [s.studyId, s.outcomeId])).rejects.toThrow(/locked by a confirmatory run/);
    const noReason = await s.lead.agent.post(`/api/comparisons/${primaryComparison}/runs`).set('x-csrf-token', s.lead.csrf).send({ kind: 'confirmatory' });
    expect(noReason.status).toBe(400);
    const again = await s.lead.agent
      .post(`/api/comparisons/${primaryComparison}/runs`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ kind: 'confirmatory', reason: 'Re-analysis requested by the external reviewer.' });
    expect(again.status).toBe(202);
    const re = await waitFor(again.body.run.id, s.lead);
    expect(re.results.primary.t).toBe(locked.results.primary.t);
    expect((await s.lead.agent.post(`/api/runs/${re.id}/lock`).set('x-csrf-token', s.lead.csrf)).status).toBe(409);
  });

  it('refuses a reassignment of a classroom a locked result read (409 naming it): the bundle, its hash and the study stay as they were', async () => {
    const before = (await reviewer.agent.get(`/api/runs/${runId}/bundle`)).body;
    const [room] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY name, id LIMIT 1`, [s.studyId]);
    const res = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/draw/reassignments`)
      .set('x-csrf-token', s.coordinator.csrf)
      .send({ classroomId: room.id, arm: room.arm === 'intervention' ? 'comparison' : 'intervention', reason: 'The teacher moved to the other programme mid-year.' });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/locked result “Reading fluency at Spring” \(locked \d{4}-\d{2}-\d{2}\) read this classroom/);
    expect(res.body.error.details.lockedRunId).toBe(runId);
    const after = (await reviewer.agent.get(`/api/runs/${runId}/bundle`)).body;
    expect(after.rows).toEqual(before.rows);
    expect(bundleHash(after.rows, after.summaries)).toBe(after.dataSha256);
    const [study] = await t.db.query(`SELECT quasi_experimental FROM studies WHERE id = $1`, [s.studyId]);
    expect(study.quasi_experimental).toBe(false);
  });

  it('moves the study from collecting (draw) to analysing (first confirmatory run) to reported (every pre-specified comparison locked), audited', async () => {
    const [study] = await t.db.query(`SELECT status FROM studies WHERE id = $1`, [s.studyId]);
    expect(study.status).toBe('reported');
    const moves = await t.db.query(
      `SELECT actor_id, before->>'status' AS before, after->>'status' AS after FROM audit_events WHERE study_id = $1 AND action = 'study.status_changed' ORDER BY at, id`,
      [s.studyId],
    );
    expect(moves.map((m: { before: string; after: string }) => `${m.before}→${m.after}`)).toEqual([
      'drafting→registered',
      'registered→enrolling',
      'enrolling→collecting',
      'collecting→analysing',
      'analysing→reported',
    ]);
    expect(moves.every((m: { actor_id: string | null }) => m.actor_id !== null)).toBe(true);
    // Rows written by one transaction share its id (xmin): each move was written with its event.
    const xmin = async (action: string, status?: string) =>
      (await t.db.query(`SELECT xmin::text AS x FROM audit_events WHERE study_id = $1 AND action = $2 AND ($3::text IS NULL OR after->>'status' = $3)`, [s.studyId, action, status ?? null]))[0].x;
    expect(await xmin('study.status_changed', 'reported')).toBe(await xmin('run.locked'));
    expect(await xmin('study.status_changed', 'collecting')).toBe(await xmin('draw.committed'));
  });

  it('shows a locked run to a principal with only their own school’s figures', async () => {
    const [site] = await t.db.query(`SELECT site_id FROM classrooms WHERE study_id = $1 LIMIT 1`, [s.studyId]);
    const email = `principal-${Date.now()}@example.org`;
    await send(s.coordinator, 'patch', `/api/sites/${site.site_id}`, { principal: { email, name: 'P. Tester' } }, 200);
    await t.db.query(`UPDATE users SET password_hash = (SELECT password_hash FROM users WHERE email = 'principal1@evenhand.test') WHERE email = $1`, [email]);
    const principal = await signIn(t.app, email);
    const run = (await principal.agent.get(`/api/runs/${runId}`)).body;
    expect(run.state).toBe('locked');
    expect(run.results.sites.every((x: { siteId: string }) => x.siteId === site.site_id)).toBe(true);
  });

  it('marks monitoring runs as interim and refuses to lock them', async () => {
    const res = await send(s.lead, 'post', `/api/comparisons/${primaryComparison}/runs`, { kind: 'monitoring', reason: 'Interim look for the steering group.' }, 202);
    const run = await waitFor(res.run.id, s.lead);
    expect(run.results.cautions[0]).toMatch(/^Interim — not confirmatory/);
    expect((await s.lead.agent.post(`/api/runs/${run.id}/lock`).set('x-csrf-token', s.lead.csrf)).status).toBe(409);
  });

  it('ends a run whose arm has one student as failed, with a clear message', async () => {
    const other = await createStudy(t.app);
    const { classrooms } = await enrolClassrooms(other, 1, 2);
    await send(other.coordinator, 'post', `/api/studies/${other.studyId}/draw`, { commit: true }, 201);
    await other.coordinator.agent.get(`/api/studies/${other.studyId}/completion`).expect(200);
    const [a, b] = await t.db.query(`SELECT id FROM classrooms WHERE study_id = $1 ORDER BY arm`, [other.studyId]);
    await fill(a.id, other.outcomeId, other.measureId, [50, 60, 70], 'F1');
    await fill(b.id, other.outcomeId, other.measureId, [55], 'F2');
    expect(classrooms).toHaveLength(2);
    const [k] = (await other.lead.agent.get(`/api/studies/${other.studyId}/comparisons`)).body.items;
    const res = await send(other.lead, 'post', `/api/comparisons/${k.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitFor(res.run.id, other.lead);
    expect(run.state).toBe('failed');
    expect(run.error).toMatch(/arm has fewer than 2 students/);
  });

  it('finishes a run whose classroom means are identical within each arm; the classroom-means check says it could not be computed and why', async () => {
    const other = await createStudy(t.app);
    await enrolClassrooms(other, 1, 4);
    await send(other.coordinator, 'post', `/api/studies/${other.studyId}/draw`, { seed: 'equal-means', commit: true }, 201);
    await other.coordinator.agent.get(`/api/studies/${other.studyId}/completion`).expect(200);
    const rooms: { id: string; arm: string }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY arm, id`, [other.studyId]);
    const raw: Record<string, number[]> = { intervention: [], comparison: [] };
    for (const [k, c] of rooms.entries()) {
      // Same scores in every classroom of an arm, in a different order: the classroom means cannot vary within an arm.
      const base = c.arm === 'intervention' ? [48, 52, 61, 39] : [44, 50, 57, 37];
      const scores = k % 2 ? [...base].reverse() : base;
      raw[c.arm].push(...scores);
      await fill(c.id, other.outcomeId, other.measureId, scores, `E${k}`);
    }
    const [k] = (await other.lead.agent.get(`/api/studies/${other.studyId}/comparisons`)).body.items;
    const queued = await send(other.lead, 'post', `/api/comparisons/${k.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitFor(queued.run.id, other.lead);
    expect(run).toMatchObject({ state: 'finished', error: null });
    expect(run.results.sensitivity.classroomMeans).toBeNull();
    expect(run.results.sensitivity.notComputed).toContainEqual({ check: 'classroom means', why: expect.stringMatching(/same mean score, so the classroom means do not vary/) });
    // The student-level Welch test is unaffected (the engine is checked against SciPy in packages/stats).
    expect(run.results.sensitivity.welch.t).toBeCloseTo(welchT(raw.intervention, raw.comparison).t, 9);
  });

  it('puts a summary-only classroom in the bundle and the data hash, and the bundle alone recomputes the primary result', async () => {
    const other = await createStudy(t.app);
    await enrolClassrooms(other, 2, 2);
    await send(other.coordinator, 'post', `/api/studies/${other.studyId}/draw`, { seed: 'summary-bundle', commit: true }, 201);
    await other.coordinator.agent.get(`/api/studies/${other.studyId}/completion`).expect(200);
    const rooms: { id: string; arm: string }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY arm, name, id`, [other.studyId]);
    const raw: Record<string, number[]> = { intervention: [], comparison: [] };
    for (const [k, c] of rooms.entries()) {
      const scores = Array.from({ length: 9 }, (_, i) => 40 + ((i * 11 + k * 17) % 29) + (c.arm === 'intervention' ? 4 : 0));
      raw[c.arm].push(...scores);
      if (k === 0) {
        // This classroom reports only n, mean and SD (sample SD, n − 1) of the same scores.
        const mean = scores.reduce((a, b) => a + b, 0) / scores.length;
        const sd = Math.sqrt(scores.reduce((a, b) => a + (b - mean) ** 2, 0) / (scores.length - 1));
        await t.db.query(`UPDATE score_sheets SET mode = 'summary', summary_n = $2, summary_mean = $3, summary_sd = $4, state = 'accepted' WHERE classroom_id = $1 AND wave_id = $5`, [c.id, scores.length, mean, sd, other.outcomeId]);
      } else await fill(c.id, other.outcomeId, other.measureId, scores, `M${k}`);
    }
    const [k] = (await other.lead.agent.get(`/api/studies/${other.studyId}/comparisons`)).body.items;
    const queued = await send(other.lead, 'post', `/api/comparisons/${k.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitFor(queued.run.id, other.lead);
    expect(run.state).toBe('finished');
    // Against Welch's t on every raw score, the summary classroom's included (the engine is checked against SciPy in packages/stats).
    const all = welchT(raw.intervention, raw.comparison);
    expect(run.results.primary.t).toBeCloseTo(all.t, 9);
    expect(run.results.primary.df).toBeCloseTo(all.df, 9);

    const bundle = (await other.lead.agent.get(`/api/runs/${run.id}/bundle`)).body;
    expect(bundle.summaries).toHaveLength(1);
    expect(bundle.summaries[0]).toMatch(new RegExp(`^summary,${rooms[0].id},${rooms[0].arm},9,`));
    expect(bundle.rows).toHaveLength(27);
    expect(bundle.rows.some((line: string) => line.startsWith(rooms[0].id))).toBe(false);
    expect(bundleHash(bundle.rows, bundle.summaries)).toBe(bundle.dataSha256);
    expect(bundleHash(bundle.rows, [])).not.toBe(bundle.dataSha256);

    // From the bundle alone: per arm, the rows' summary merged with the summary-only classroom's.
    const parts: Record<string, Summary[]> = { intervention: [], comparison: [] };
    const byArm: Record<string, number[]> = { intervention: [], comparison: [] };
    for (const r of analysed(bundle.rows)) byArm[r.arm].push(r.outcome!);
    for (const arm of ['intervention', 'comparison']) {
      const v = byArm[arm];
      const mean = v.reduce((a, b) => a + b, 0) / v.length;
      parts[arm].push({ n: v.length, mean, m2: v.reduce((a, b) => a + (b - mean) ** 2, 0) });
    }
    for (const line of bundle.summaries as string[]) {
      const [, , arm, n, mean, sd] = line.split(',');
      parts[arm].push({ n: Number(n), mean: Number(mean), m2: Number(sd) ** 2 * (Number(n) - 1) });
    }
    const group = (arm: string) => {
      const m = mergeAllSummaries(parts[arm]);
      return { n: m.n, mean: m.mean, sd: Math.sqrt(m.m2 / (m.n - 1)) };
    };
    const again = welchTFromSummary(group('intervention'), group('comparison'));
    expect(again.t).toBeCloseTo(bundle.results.primary.t, 10);
    expect(again.p).toBeCloseTo(bundle.results.primary.p, 12);
  });

  it('leaves the rows of sheets a run does not read out of its rank, spread and quartile figures: a submitted sheet in a confirmatory run, a summary sheet that kept rows', async () => {
    const other = await createStudy(t.app);
    await enrolClassrooms(other, 2, 3);
    await send(other.coordinator, 'post', `/api/studies/${other.studyId}/draw`, { seed: 'unread-sheets', commit: true }, 201);
    await other.coordinator.agent.get(`/api/studies/${other.studyId}/completion`).expect(200);
    const rooms: { id: string; arm: string }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY arm, name, id`, [other.studyId]);
    const readValues: Record<string, number[]> = { intervention: [], comparison: [] };
    for (const [k, c] of rooms.entries()) {
      // Far-off scores in the two unread sheets, so that counting them would move every figure checked below.
      const unread = k === 0 || k === rooms.length - 1;
      const scores = Array.from({ length: 8 }, (_, i) => (unread ? 95 - i : 40 + ((i * 7 + k * 5) % 23) + (c.arm === 'intervention' ? 3 : 0)));
      await fillSheet(t.db, { classroomId: c.id, waveId: other.outcomeId, measureId: other.measureId }, scores, `U${k}`, k === 0 ? 'submitted' : 'accepted');
      if (k === rooms.length - 1) {
        await t.db.query(`UPDATE score_sheets SET mode = 'summary', summary_n = 8, summary_mean = 50, summary_sd = 5 WHERE classroom_id = $1 AND wave_id = $2`, [c.id, other.outcomeId]);
      } else if (!unread) readValues[c.arm].push(...scores);
    }
    const [k] = (await other.lead.agent.get(`/api/studies/${other.studyId}/comparisons`)).body.items;
    const queued = await send(other.lead, 'post', `/api/comparisons/${k.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitFor(queued.run.id, other.lead);
    expect(run.state).toBe('finished');
    const r = run.results;
    // Against the engine's own checks on the rows the run reads (each checked against SciPy in packages/stats).
    const mw = mannWhitney(readValues.intervention, readValues.comparison);
    expect(r.sensitivity.mannWhitney.u).toBe(mw.u);
    expect(r.sensitivity.mannWhitney.p).toBeCloseTo(mw.p, 12);
    const l = levene([readValues.intervention, readValues.comparison], { center: 'median' });
    expect(r.diagnostics.leveneMedian.statistic).toBeCloseTo(l.statistic, 10);
    for (const [i, arm] of (['intervention', 'comparison'] as const).entries()) {
      const sorted = [...readValues[arm]].sort((a, b) => a - b);
      expect(r.descriptives[i].quantiles).toMatchObject({ min: sorted[0], max: sorted[sorted.length - 1] });
      expect(r.diagnostics.shapiroWilk[i]).toMatchObject({ arm, n: sorted.length });
    }
  });

  it('keeps in a finished run’s bundle the arms it read after a reassignment, and refuses to lock it until it is run again', async () => {
    const other = await createStudy(t.app);
    await enrolClassrooms(other, 1, 4);
    await send(other.coordinator, 'post', `/api/studies/${other.studyId}/draw`, { seed: 'arms-read', commit: true }, 201);
    await other.coordinator.agent.get(`/api/studies/${other.studyId}/completion`).expect(200);
    const rooms: { id: string; arm: string }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY arm, id`, [other.studyId]);
    for (const [k, c] of rooms.entries()) await fill(c.id, other.outcomeId, other.measureId, Array.from({ length: 6 }, (_, i) => 40 + ((i * 7 + k * 5) % 19)), `A${k}`);
    const [k] = (await other.lead.agent.get(`/api/studies/${other.studyId}/comparisons`)).body.items;
    const queued = await send(other.lead, 'post', `/api/comparisons/${k.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitFor(queued.run.id, other.lead);
    expect(run).toMatchObject({ state: 'finished', error: null });
    const before = (await other.lead.agent.get(`/api/runs/${run.id}/bundle`)).body;
    const moved = rooms[0];
    await send(other.coordinator, 'post', `/api/studies/${other.studyId}/draw/reassignments`, { classroomId: moved.id, arm: moved.arm === 'intervention' ? 'comparison' : 'intervention', reason: 'The school swapped this teacher’s programme.' }, 201);
    const after = (await other.lead.agent.get(`/api/runs/${run.id}/bundle`)).body;
    expect(after.rows).toEqual(before.rows);
    expect(after.rows.filter((line: string) => line.startsWith(moved.id)).every((line: string) => line.split(',')[1] === moved.arm)).toBe(true);
    expect(bundleHash(after.rows, after.summaries)).toBe(run.dataSha256);
    expect(after.draw.reassignments).toEqual([]);
    const lock = await other.lead.agent.post(`/api/runs/${run.id}/lock`).set('x-csrf-token', other.lead.csrf);
    expect(lock.status).toBe(409);
    expect(lock.body.error.message).toMatch(/was reassigned after this run read the data/);
  });

  it('tests normality of an arm above 5 000 students on a seeded sample that the bundle alone reproduces', async () => {
    const other = await createStudy(t.app);
    await enrolClassrooms(other, 1, 2);
    await send(other.coordinator, 'post', `/api/studies/${other.studyId}/draw`, { seed: 'large-arm', commit: true }, 201);
    await other.coordinator.agent.get(`/api/studies/${other.studyId}/completion`).expect(200);
    const [big, small] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY arm, id`, [other.studyId]);
    await fill(big.id, other.outcomeId, other.measureId, Array.from({ length: 5200 }, (_, i) => 40 + ((i * 7919) % 61)), 'L');
    await fill(small.id, other.outcomeId, other.measureId, Array.from({ length: 40 }, (_, i) => 45 + ((i * 13) % 37)), 'S');
    const [k] = (await other.lead.agent.get(`/api/studies/${other.studyId}/comparisons`)).body.items;
    const queued = await send(other.lead, 'post', `/api/comparisons/${k.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitFor(queued.run.id, other.lead);
    expect(run.state).toBe('finished');
    expect(run.results.diagnostics.notes.join(' ')).toMatch(/5,000 students drawn at random without replacement/);
    const bundle = (await other.lead.agent.get(`/api/runs/${run.id}/bundle`)).body;
    const byArm: Record<string, number[]> = { intervention: [], comparison: [] };
    for (const r of analysed(bundle.rows)) byArm[r.arm].push(r.outcome!);
    for (const sw of run.results.diagnostics.shapiroWilk as { arm: string; w: number; p: number; n: number }[]) {
      const sorted = byArm[sw.arm].sort((a, b) => a - b);
      const sample = sorted.length > 5000 ? sampleRanks(sorted.length, 5000, `${bundle.dataSha256}:${sw.arm}`).map((r) => sorted[r]) : sorted;
      expect(sw.n).toBe(Math.min(5000, sorted.length));
      const again = shapiroWilk(sample);
      expect(sw.w).toBe(again.w);
      expect(sw.p).toBe(again.p);
    }
    expect(run.results.diagnostics.shapiroWilk.map((x: { n: number }) => x.n).sort()).toEqual([40, 5000]);
  });

  it('runs each job exactly once with two worker processes on one database', async () => {
    const logger = createLogger({ logLevel: 'silent' });
    const second = await startQueue(t.databaseUrl, logger);
    await startWorkers(second, t.db, logger, 0.5);
    try {
      const ids: string[] = [];
      for (let i = 0; i < 6; i++) {
        const res = await send(s.lead, 'post', `/api/comparisons/${primaryComparison}/runs`, { kind: 'monitoring', reason: `Parallel check number ${i}` }, 202);
        ids.push(res.run.id);
      }
      for (const id of ids) expect((await waitFor(id, s.lead)).state).toBe('finished');
      const jobs = await t.db.query(`SELECT data->>'runId' AS run, state, retry_count FROM pgboss.job WHERE name = 'comparison-run' AND data->>'runId' = ANY($1)`, [ids]);
      expect(jobs).toHaveLength(ids.length);
      expect(jobs.every((j: { state: string; retry_count: number }) => j.state === 'completed' && j.retry_count === 0)).toBe(true);
    } finally {
      await second.stop();
    }
  });
});

describe('checks', () => {
  it('reports attrition against both boundaries and baseline equivalence on the analytic sample', async () => {
    const res = await s.lead.agent.get(`/api/studies/${s.studyId}/checks`);
    expect(res.status).toBe(200);
    const m = res.body.measures[0];
    // 8 classrooms × 12 students, one leaver each: 8.33 % overall, 0 differential. The attrition now lives in the one
    // accounting the runs store (runs/accounting.ts); Welch decides here, so a student needs no pretest to be analysed.
    const a = m.accounting.attrition.students;
    expect(a.overall).toBeCloseTo(100 / 12, 10);
    expect(a.differential).toBeCloseTo(0, 10);
    expect(a.cautious).toMatchObject({ band: 'low', interpolated: true });
    expect(m.accounting.arms[0].students.lost).toEqual([{ reason: 'left-study', n: 4 }]);
    expect(['satisfies', 'requires-adjustment', 'fails']).toContain(m.baselineEquivalence.band);
    expect(m.quality.find((q: { waveId: string }) => q.waveId === s.outcomeId)).toMatchObject({ accepted: 8, left: 8 });
    expect(m.boxPlots.some((b: { siteId: string | null }) => b.siteId === null)).toBe(true);
  });
});

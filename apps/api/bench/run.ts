// A full confirmatory run over 2 000 000 scores in 8 000 classrooms, against one bare aggregate scan of
// the same rows in the same run; and the run's extra memory when the rows grow 10× (25 → 250 scores per
// classroom): the run holds one summary per classroom in Node, never the rows, so it must stay flat. Then, for
// information, the 2 000 000-score run again with each student's pretest from a baseline wave (pretest adjustment).
// Then the two-level model (schools as blocks, the pretest) at 2 000 000 scores, in classrooms of 250 and of a real
// class's 25, against one scan of both waves; and, when Rscript with lme4 and lmerTest is installed, the same model
// fitted to the same rows by lme4 + lmerTest in the same run. And a yes/no measure's run over 2 000 000 answers (the
// counts per classroom summed in SQL, the cluster-robust linear probability regression) against one scan of them.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pgCopy from 'pg-copy-streams';
import { pipeline } from 'node:stream/promises';
import { createWriteStream } from 'node:fs';
import { listComparisons } from '../src/runs/comparisons.js';
import { executeRun } from '../src/runs/service.js';
import { storeSheetDigestsAndSums } from '../src/score-sheets/sums.js';
import { median, openBench, time } from './setup.js';

/** The whole run benchmark, or only its yes/no or two-level part (`npm run bench -w apps/api -- two-level`). */
export async function benchRun(only?: 'yes-no' | 'two-level') {
  const b = await openBench('run');
  const { db, logger, lead } = b;
  const study = b.study;
  type Study = Awaited<ReturnType<typeof study>>;
  /** The goal's baseline: one aggregate scan of the waves' scores by arm. */
  const bareScan = (s: Study, waveIds: string[]) =>
    time(() =>
      db.query(
        `SELECT c.arm, count(*), sum(x.score), sum(x.score * x.score) FROM scores x JOIN classrooms c ON c.id = x.classroom_id
          WHERE x.study_id = $1 AND x.wave_id = ANY($2::uuid[]) AND x.measure_id = $3 GROUP BY c.arm`,
        [s.studyId, waveIds, s.measureId],
      ),
    );
  /** What accepting the study's sheets does: store each sheet's digest, after the planner learns the bulk load's sizes (as autovacuum would). */
  async function acceptSheets(s: Study) {
    await db.query('ANALYZE');
    const sheetIds: string[] = (await db.query(`SELECT id FROM score_sheets WHERE study_id = $1`, [s.studyId])).map((r: { id: string }) => r.id);
    await storeSheetDigestsAndSums(db.manager, sheetIds);
  }
  const queueRun = async (s: Study, comparisonId: string): Promise<string> =>
    (await db.query(`INSERT INTO runs (comparison_id, study_id, kind, plan_version) VALUES ($1, $2, 'confirmatory', 1) RETURNING id`, [comparisonId, s.studyId]))[0].id;
  /** Median of 3 of the bare scan and of the full run, and the run's peak extra memory. */
  async function measure(s: Study, comparisonId: string) {
    const runTimes: number[] = [];
    const scanTimes: number[] = [];
    const peak = { js: 0, rss: 0 };
    let notes: string[] = [];
    for (let i = 0; i < 3; i++) {
      scanTimes.push(await bareScan(s, [s.waveId]));
      const runId = await queueRun(s, comparisonId);
      // Collected first, so each run's peak is measured from the same floor.
      global.gc?.();
      const base = process.memoryUsage();
      // JavaScript heap plus buffers is what the run itself allocates; RSS also moves with the queue polling beside it.
      const js = (m: NodeJS.MemoryUsage) => m.heapUsed + m.external + m.arrayBuffers;
      const watch = setInterval(() => {
        const m = process.memoryUsage();
        peak.js = Math.max(peak.js, js(m) - js(base));
        peak.rss = Math.max(peak.rss, m.rss - base.rss);
      }, 5);
      runTimes.push(await time(() => executeRun(db, logger, runId)));
      clearInterval(watch);
      const [done] = await db.query(`SELECT state, error, results->'diagnostics'->'notes' AS notes FROM runs WHERE id = $1`, [runId]);
      if (done.state !== 'finished') throw new Error(`bench run ${done.state}: ${done.error}`);
      notes = done.notes;
    }
    return { run: median(runTimes), scan: median(scanTimes), peak, notes };
  }

  /** Students and outcome scores (about 500 ± 100, the intervention 20 higher, plus a classroom effect) for a new study. */
  async function scoredStudy(classrooms: number, perClass: number, sites: number) {
    const s = await study(classrooms, sites);
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
    return s;
  }

  /** A baseline wave where each student's pretest is their outcome less about 40, give or take 25; returns the wave. */
  async function addPretests(s: Study): Promise<string> {
    const [baselineWave] = await db.query(`INSERT INTO waves (study_id, kind, name, opens_on, closes_on) VALUES ($1, 'baseline', 'Before', current_date - 90, current_date - 60) RETURNING id`, [s.studyId]);
    await db.query(`INSERT INTO score_sheets (study_id, classroom_id, wave_id, measure_id, state) SELECT $1, id, $2, $3, 'accepted' FROM classrooms WHERE study_id = $1`, [s.studyId, baselineWave.id, s.measureId]);
    // An INSERT … SELECT never runs in parallel, and the serial planner picks a nested loop that rescans the study's
    // outcome scores once per classroom (hours at 2 000 000 rows): a hash join copies them in one pass.
    await db.transaction(async (m) => {
      await m.query('SET LOCAL enable_nestloop = off');
      await m.query(
        `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study)
         SELECT bs.id, $1, o.classroom_id, $2, $3, o.student_code, greatest(0, o.score - 40 + round((50 * (random() - 0.5))::numeric, 1)), false
           FROM scores o JOIN score_sheets bs ON bs.classroom_id = o.classroom_id AND bs.wave_id = $2
          WHERE o.study_id = $1 AND o.wave_id = $4`,
        [s.studyId, baselineWave.id, s.measureId, s.waveId],
      );
    });
    return baselineWave.id;
  }

  async function runBench(classrooms: number, perClass: number) {
    // An odd number of sites, so the alternating arms meet in every site and the per-site pooling runs too.
    const s = await scoredStudy(classrooms, perClass, Math.max(2, Math.round(classrooms / 80)) | 1);
    await acceptSheets(s);
    const comparisonId: string = (await listComparisons(db, lead, s.studyId)).items[0].id;
    const measured = await measure(s, comparisonId);
    // For comparison: the same run when no sheet has its digest stored yet (rows written outside the API), so the run hashes every row.
    await db.query(`UPDATE score_sheets SET rows_sha256 = NULL WHERE study_id = $1`, [s.studyId]);
    const coldRunId = await queueRun(s, comparisonId);
    const unstored = await time(() => executeRun(db, logger, coldRunId));
    return { rows: classrooms * perClass, ...measured, unstored, study: s, comparisonId };
  }

  if (!only) {
    const small = await runBench(8000, 25);
    const large = await runBench(8000, 250);
    for (const r of [small, large]) {
      console.log(`\nConfirmatory run over ${r.rows.toLocaleString('en-US')} scores (median of 3)`);
      console.log(`  bare aggregate scan:        ${r.scan.toFixed(0)} ms`);
      console.log(`  full run:                   ${r.run.toFixed(0)} ms`);
      // The goal is set at 2 000 000 scores; at 25 per classroom the per-classroom work weighs more against the scan.
      console.log(`  ratio:                      ${(r.run / r.scan).toFixed(2)}×${r === large ? '   (goal ≤ 4×)' : ''}`);
      console.log(`  without stored digests:     ${r.unstored.toFixed(0)} ms (${(r.unstored / r.scan).toFixed(2)}×; every row hashed)`);
      console.log(`  peak extra heap + buffers:  ${(r.peak.js / 2 ** 20).toFixed(1)} MB   (RSS ${(r.peak.rss / 2 ** 20).toFixed(1)} MB)`);
      // What the run did not compute at this size, in its own words.
      for (const note of r.notes) console.log(`  note: ${note}`);
    }

    // With pretest adjustment: the same 2 000 000 outcome scores each paired with a baseline score of the same student.
    const { study: s, comparisonId } = large;
    const baselineWaveId = await addPretests(s);
    await acceptSheets(s);
    await db.query(`UPDATE comparisons SET covariate = 'baseline' WHERE id = $1`, [comparisonId]);
    const adjusted = await measure(s, comparisonId);
    // The pretest doubles the rows the run reads, so it is also set against one scan of both waves.
    const bothScans: number[] = [];
    for (let i = 0; i < 3; i++) bothScans.push(await bareScan(s, [s.waveId, baselineWaveId]));
    const bothScan = median(bothScans);
    console.log(`\nThe same run adjusted for the pretest (${large.rows.toLocaleString('en-US')} outcome + ${large.rows.toLocaleString('en-US')} baseline scores, median of 3)`);
    console.log(`  bare aggregate scan (outcome wave): ${adjusted.scan.toFixed(0)} ms`);
    console.log(`  bare aggregate scan (both waves):   ${bothScan.toFixed(0)} ms`);
    console.log(`  full run:                           ${adjusted.run.toFixed(0)} ms`);
    // Informative: the goal is set for the run above; this one also pairs every student with their pretest.
    console.log(`  ratio:                              ${(adjusted.run / adjusted.scan).toFixed(2)}× the outcome scan, ${(adjusted.run / bothScan).toFixed(2)}× the two-wave scan`);

    console.log(`\nmemory growth when the rows grow 10× (same 8 000 classrooms): ${(large.peak.js / small.peak.js).toFixed(2)}× the smaller run's peak extra heap + buffers (goal: flat, ≈ 1×)`);
  }
  if (!only || only === 'yes-no') {
    // A yes/no measure: 2 000 000 answers stored as 1 and 0 (about 45 % yes in the intervention arm, 38 % in the comparison).
    {
      const y = await study(8000, Math.max(2, Math.round(8000 / 80)) | 1);
      await db.query(`UPDATE measures SET scale = 'yes-no', min_score = 0, max_score = 1 WHERE id = $1`, [y.measureId]);
      await db.query(
        `INSERT INTO students (study_id, student_code, classroom_id)
         SELECT $1, 'P' || c.k || '-' || j, c.id FROM (SELECT id, row_number() OVER () AS k FROM classrooms WHERE study_id = $1) c, generate_series(1, 250) j`,
        [y.studyId],
      );
      await db.query(
        `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study)
         SELECT sh.id, $1, st.classroom_id, $2, $3, st.student_code, (random() < CASE WHEN c.arm = 'intervention' THEN 0.45 ELSE 0.38 END)::int, false
           FROM students st JOIN classrooms c ON c.id = st.classroom_id JOIN score_sheets sh ON sh.classroom_id = c.id
          WHERE st.study_id = $1`,
        [y.studyId, y.waveId, y.measureId],
      );
      await acceptSheets(y);
      const yesNo = await measure(y, (await listComparisons(db, lead, y.studyId)).items[0].id);
      console.log(`\nYes/no run over 2,000,000 answers (median of 3)`);
      console.log(`  bare aggregate scan:        ${yesNo.scan.toFixed(0)} ms`);
      console.log(`  full run:                   ${yesNo.run.toFixed(0)} ms`);
      console.log(`  ratio:                      ${(yesNo.run / yesNo.scan).toFixed(2)}×   (goal ≤ 4×)`);
      console.log(`  peak extra heap + buffers:  ${(yesNo.peak.js / 2 ** 20).toFixed(1)} MB`);
    }
  }
  if (!only || only === 'two-level') {
    // The two-level model, registered as a cluster-assigned study's primary test: 41 schools (40 block indicators; an
    // odd number, so the alternating arms meet in every school) and the pretest.
    const SCHOOLS = 41;
    async function twoLevelBench(classrooms: number, perClass: number) {
      const s = await scoredStudy(classrooms, perClass, SCHOOLS);
      const baselineWaveId = await addPretests(s);
      await acceptSheets(s);
      const comparisonId: string = (await listComparisons(db, lead, s.studyId)).items[0].id;
      const welch = await measure(s, comparisonId);
      await db.query(`UPDATE comparisons SET primary_test = 'two-level', covariate = 'baseline' WHERE id = $1`, [comparisonId]);
      const model = await measure(s, comparisonId);
      const both: number[] = [];
      for (let i = 0; i < 3; i++) both.push(await bareScan(s, [s.waveId, baselineWaveId]));
      return { s, baselineWaveId, rows: classrooms * perClass, welch, model, bothScan: median(both) };
    }
    const realistic = await twoLevelBench(80_000, 25);
    const wide = await twoLevelBench(8000, 250);
    for (const r of [realistic, wide]) {
      const per = r.rows / (r === realistic ? 80_000 : 8000);
      console.log(`\n${r.rows.toLocaleString('en-US')} outcome scores in classrooms of ${per}, ${SCHOOLS} schools, with pretests (median of 3)`);
      console.log(`  bare aggregate scan (outcome wave):  ${r.welch.scan.toFixed(0)} ms`);
      console.log(`  bare aggregate scan (both waves):    ${r.bothScan.toFixed(0)} ms`);
      console.log(`  run, Welch's t registered:           ${r.welch.run.toFixed(0)} ms = ${(r.welch.run / r.welch.scan).toFixed(2)}× the outcome scan   (goal ≤ 4×)`);
      console.log(`  run, two-level model registered:     ${r.model.run.toFixed(0)} ms = ${(r.model.run / r.bothScan).toFixed(2)}× the two-wave scan   (goal ≤ 4×)`);
      console.log(`  peak extra heap + buffers (model):   ${(r.model.peak.js / 2 ** 20).toFixed(1)} MB   (RSS ${(r.model.peak.rss / 2 ** 20).toFixed(1)} MB)`);
    }
    // Same number of classrooms at 25 and 250 students: the model holds one set of sums per classroom, so memory stays flat.
    const flat = await twoLevelBench(8000, 25);
    console.log(`\ntwo-level run's memory when the rows grow 10× (8 000 classrooms, 25 → 250 scores each): ${(wide.model.peak.js / flat.model.peak.js).toFixed(2)}× (goal: flat, ≈ 1×)`);

    await compareWithLme4(realistic.s, realistic.baselineWaveId, realistic.model.run, realistic.rows);
  }
  await b.close();

  /** Fits the same model to the same rows with lme4 + lmerTest, when R has them, and prints the ratio of the times. */
  async function compareWithLme4(s: Study, baselineWaveId: string, evenhandMs: number, rows: number) {
    const hasR = (() => {
      try {
        execFileSync('Rscript', ['-e', 'suppressMessages({library(lme4); library(lmerTest)})'], { stdio: 'ignore' });
        return true;
      } catch {
        return false;
      }
    })();
    if (!hasR) {
      console.log('\nlme4 + lmerTest comparison skipped: Rscript with lme4 and lmerTest is not installed (apt-get install r-base-core r-cran-lme4 r-cran-lmertest)');
      return;
    }
    const dir = mkdtempSync(join(tmpdir(), 'evenhand-lme4-'));
    const csv = join(dir, 'rows.csv');
    try {
      const client = await (db.driver as unknown as { master: { connect(): Promise<import('pg').PoolClient> } }).master.connect();
      try {
        const copy = client.query(
          pgCopy.to(`COPY (SELECT o.score AS y, (c.arm = 'intervention')::int AS arm, b.score AS pretest, c.id AS unit, c.site_id AS block
                             FROM scores o JOIN classrooms c ON c.id = o.classroom_id
                             JOIN scores b ON b.classroom_id = o.classroom_id AND b.student_code = o.student_code AND b.wave_id = '${baselineWaveId}'
                            WHERE o.study_id = '${s.studyId}' AND o.wave_id = '${s.waveId}') TO STDOUT WITH (FORMAT csv, HEADER)`),
        );
        await pipeline(copy, createWriteStream(csv));
      } finally {
        client.release();
      }
      const script = `suppressMessages({library(lme4); library(lmerTest)})
d <- read.csv("${csv}"); d$unit <- factor(d$unit); d$block <- factor(d$block)
t0 <- Sys.time()
fit <- lmerTest::lmer(y ~ arm + pretest + block + (1 | unit), data = d, REML = TRUE)
s <- summary(fit)$coefficients["arm", ]
cat(as.numeric(difftime(Sys.time(), t0, units = "secs")) * 1000, s[["Estimate"]], s[["df"]], "\n")`;
      const out = execFileSync('Rscript', ['-e', script], { encoding: 'utf8', maxBuffer: 1 << 20 }).trim().split(/\s+/).map(Number);
      const [rMs, rEstimate, rDf] = out;
      const [run] = await db.query(`SELECT results->'twoLevel' AS m FROM runs WHERE comparison_id IN (SELECT id FROM comparisons WHERE study_id = $1) AND state = 'finished' ORDER BY finished_at DESC LIMIT 1`, [s.studyId]);
      console.log(`\nThe same two-level model on the same ${rows.toLocaleString('en-US')} rows with lme4 + lmerTest (fit and Satterthwaite df, not counting reading the CSV)`);
      console.log(`  lme4 + lmerTest:  ${(rMs / 1000).toFixed(1)} s; arm ${rEstimate.toFixed(4)}, df ${rDf.toFixed(1)}`);
      console.log(`  Evenhand run:     ${(evenhandMs / 1000).toFixed(1)} s (reading the scores in SQL included); arm ${Number(run.m.estimate).toFixed(4)}, df ${Number(run.m.df).toFixed(1)}`);
      console.log(`  Evenhand is ${(rMs / evenhandMs).toFixed(1)}× faster   (goal: well over 20×)`);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }
}

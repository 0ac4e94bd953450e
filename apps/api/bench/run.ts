// A full confirmatory run over 2 000 000 scores in ~8 000 classrooms, against one bare aggregate scan of
// the same rows in the same run; and the run's extra memory when the rows grow 10×.
import { executeRun, listComparisons } from '../src/runs/service.js';
import { median, openBench, time } from './setup.js';

export async function benchRun() {
  const b = await openBench('run');
  const { db, logger, lead } = b;
  const study = b.study;
  async function runBench(classrooms: number, perClass: number) {
    // An odd number of sites, so the alternating arms meet in every site and the per-site pooling runs too.
    const s = await study(classrooms, Math.max(2, Math.round(classrooms / 80)) | 1);
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
    let notes: string[] = [];
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
      const [done] = await db.query(`SELECT state, error, results->'diagnostics'->'notes' AS notes FROM runs WHERE id = $1`, [run.id]);
      if (done.state !== 'finished') throw new Error(`bench run ${done.state}: ${done.error}`);
      notes = done.notes;
    }
    return { rows: classrooms * perClass, run: median(runTimes), scan: median(scanTimes), peak, notes };
  }

  const small = await runBench(800, 250);
  const large = await runBench(8000, 250);
  for (const r of [small, large]) {
    console.log(`\nConfirmatory run over ${r.rows.toLocaleString('en-US')} scores (median of 3)`);
    console.log(`  bare aggregate scan:        ${r.scan.toFixed(0)} ms`);
    console.log(`  full run:                   ${r.run.toFixed(0)} ms`);
    console.log(`  ratio:                      ${(r.run / r.scan).toFixed(2)}×   (goal ≤ 4×)`);
    console.log(`  peak extra RSS during run:  ${(r.peak / 2 ** 20).toFixed(0)} MB`);
    // What the run did not compute at this size, in its own words.
    for (const note of r.notes) console.log(`  note: ${note}`);
  }
  console.log(`\nmemory growth when the rows grow 10×: ${(large.peak / Math.max(small.peak, 1)).toFixed(2)}× the smaller run's peak extra RSS`);

  await b.close();
}

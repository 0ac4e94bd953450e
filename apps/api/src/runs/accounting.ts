import type { EntityManager } from 'typeorm';
import { attrition } from '@evenhand/stats';
import { arms, lossReasons, type Accounting, type Arm, type AttritionCheck, type LossReason, type PrimaryTest, type SheetState, type UnitAccount } from '@evenhand/entities';

/**
 * Who was analysed and who was lost, and why: the one definition the run stores (`results.accounting`), the Checks
 * show and the report and bundle repeat. `standingsSql` reads each randomised classroom; `account` (pure) turns those
 * into counts, reasons and attrition.
 */

/** One classroom the draw gave an arm, as the accounting reads it. */
export interface ClassroomStanding {
  classroomId: string;
  arm: Arm;
  /** Student codes registered to the classroom: its randomised students. */
  registered: number;
  /** Its outcome sheet's state (null: no sheet) and whether anything was entered on it. */
  sheetState: SheetState | null;
  entered: boolean;
  /** The class summary's n when the sheet read is a summary, else null. */
  summaryN: number | null;
  /** On a sheet read: rows with an outcome score, rows marked as left without one, and scored rows with a pretest score. */
  scored: number;
  left: number;
  withPretest: number;
}

/** Students need a pretest to be analysed when the deciding analysis adjusts for it: the two-level model with the baseline covariate (a yes/no measure is decided without it). */
export function needsPretest(c: { primaryTest: PrimaryTest; covariate: 'none' | 'baseline'; scale: 'score' | 'yes-no'; hasBaselineWave: boolean }): boolean {
  return c.primaryTest === 'two-level' && c.covariate === 'baseline' && c.scale === 'score' && c.hasBaselineWave;
}

const sheetReason = (c: ClassroomStanding): LossReason =>
  c.sheetState === 'submitted' ? 'awaiting-review' : c.sheetState === 'returned' ? 'returned' : c.sheetState === 'open' && c.entered ? 'sheet-not-submitted' : 'sheet-not-entered';

/** A classroom's students: analysed and lost by reason. */
function studentsOf(c: ClassroomStanding, reads: readonly SheetState[], pretest: boolean): { randomised: number; analysed: number; lost: Partial<Record<LossReason, number>> } {
  if (c.sheetState === null || !reads.includes(c.sheetState)) return { randomised: c.registered, analysed: 0, lost: { [sheetReason(c)]: c.registered } };
  if (c.summaryN !== null) {
    // A summary names no student: it counts n students, at least as many as were randomised, none of them with a pretest.
    const randomised = Math.max(c.registered, c.summaryN);
    const lost = { 'no-outcome-score': randomised - c.summaryN, ...(pretest ? { 'no-pretest': c.summaryN } : {}) };
    return { randomised, analysed: pretest ? 0 : c.summaryN, lost };
  }
  const analysed = pretest ? c.withPretest : c.scored;
  return {
    randomised: c.registered,
    analysed,
    lost: { 'left-study': c.left, 'no-outcome-score': c.registered - c.scored - c.left, 'no-pretest': c.scored - analysed },
  };
}

const inOrder = (counts: Partial<Record<LossReason, number>>) => lossReasons.flatMap((reason) => ((counts[reason] ?? 0) > 0 ? [{ reason, n: counts[reason]! }] : []));

function attritionOf(i: UnitAccount, c: UnitAccount): AttritionCheck | null {
  if (i.randomised === 0 || c.randomised === 0) return null;
  const { boundaries: _all, ...a } = attrition({ randomized1: i.randomised, analyzed1: i.analysed, randomized2: c.randomised, analyzed2: c.analysed });
  return a;
}

/**
 * Randomised: the classrooms given an arm and the codes registered to them. Analysed: a student with an outcome score
 * on a sheet in `reads` (and a pretest when `pretest`); a classroom with an analysed student. Every other student or
 * classroom is lost for one reason: its sheet's state when the sheet was not read, else the student's own (a lost
 * classroom whose sheet was read takes the reason most of its students have).
 */
export function account(classrooms: readonly ClassroomStanding[], reads: readonly ('accepted' | 'submitted')[], pretest: boolean): Accounting {
  const perArm = new Map(arms.map((arm) => [arm, { classrooms: { randomised: 0, analysed: 0, lost: {} as Partial<Record<LossReason, number>> }, students: { randomised: 0, analysed: 0, lost: {} as Partial<Record<LossReason, number>> } }]));
  const lostClassrooms: Accounting['lostClassrooms'] = [];
  for (const c of classrooms) {
    const s = studentsOf(c, reads, pretest);
    const a = perArm.get(c.arm)!;
    a.students.randomised += s.randomised;
    a.students.analysed += s.analysed;
    for (const [reason, n] of Object.entries(s.lost) as [LossReason, number][]) a.students.lost[reason] = (a.students.lost[reason] ?? 0) + n;
    a.classrooms.randomised += 1;
    if (s.analysed > 0) {
      a.classrooms.analysed += 1;
      continue;
    }
    const ranked = inOrder(s.lost).sort((x, y) => y.n - x.n);
    const reason = ranked[0]?.reason ?? 'no-outcome-score';
    a.classrooms.lost[reason] = (a.classrooms.lost[reason] ?? 0) + 1;
    lostClassrooms.push({ classroomId: c.classroomId, arm: c.arm, reason, students: s.randomised });
  }
  const out = arms.map((arm) => {
    const a = perArm.get(arm)!;
    return {
      arm,
      classrooms: { randomised: a.classrooms.randomised, analysed: a.classrooms.analysed, lost: inOrder(a.classrooms.lost) },
      students: { randomised: a.students.randomised, analysed: a.students.analysed, lost: inOrder(a.students.lost) },
    };
  });
  const [i, k] = [out.find((x) => x.arm === 'intervention')!, out.find((x) => x.arm === 'comparison')!];
  return {
    reads: [...reads],
    needsPretest: pretest,
    arms: out,
    attrition: { students: attritionOf(i.students, k.students), classrooms: attritionOf(i.classrooms, k.classrooms) },
    lostClassrooms: lostClassrooms.sort((x, y) => (x.classroomId < y.classroomId ? -1 : x.classroomId > y.classroomId ? 1 : 0)),
  };
}

/**
 * Each classroom with an arm: its registered codes, its outcome sheet's state and, on a sheet read, its scored, left and
 * pretest-paired rows (a student's pretest is their score on the classroom's baseline sheet, as the run pairs them).
 * $1 study, $2 outcome wave, $3 measure, $4 sheet states read, $5 baseline wave (only with `withPretest`).
 */
const standingsSql = (withPretest: boolean) => standingsWith(`
         SELECT o.classroom_id, count(*) FILTER (WHERE o.score IS NOT NULL)::int AS scored,
                count(*) FILTER (WHERE o.score IS NULL AND o.left_study)::int AS "left",
                ${withPretest ? 'count(b.score) FILTER (WHERE o.score IS NOT NULL)::int' : '0'} AS with_pretest
           FROM scores o JOIN score_sheets sh ON sh.id = o.sheet_id AND sh.state = ANY($4) AND sh.mode = 'rows'
           ${
             withPretest
               ? `LEFT JOIN score_sheets bs ON bs.classroom_id = sh.classroom_id AND bs.study_id = $1 AND bs.wave_id = $5 AND bs.measure_id = $3 AND bs.state = ANY($4)
           LEFT JOIN scores b ON b.sheet_id = bs.id AND b.student_code = o.student_code AND b.score IS NOT NULL AND b.study_id = $1 AND b.wave_id = $5 AND b.measure_id = $3`
               : ''
           }
          WHERE o.study_id = $1 AND o.wave_id = $2 AND o.measure_id = $3
          GROUP BY o.classroom_id`);

/**
 * The same standings when a run's classroom pass has already counted the scored rows and their pretests: only the
 * rows marked as left without a score are counted here, so the outcome scores are not joined to their pretests twice.
 */
const standingsAfterRunSql = standingsWith(`
         SELECT o.classroom_id, 0 AS scored, count(*)::int AS "left", 0 AS with_pretest
           FROM scores o JOIN score_sheets sh ON sh.id = o.sheet_id AND sh.state = ANY($4) AND sh.mode = 'rows'
          WHERE o.study_id = $1 AND o.wave_id = $2 AND o.measure_id = $3 AND o.score IS NULL AND o.left_study
          GROUP BY o.classroom_id`);

function standingsWith(rowed: string): string {
  return `
  -- One pass over the registry, materialized: inlined, the planner sometimes reran the count per classroom (minutes at 8 000).
  WITH registered AS MATERIALIZED (SELECT classroom_id, count(*)::int AS n FROM students WHERE study_id = $1 GROUP BY classroom_id),
       rowed AS (${rowed})
  SELECT c.id AS classroom_id, c.arm, coalesce(r.n, 0)::int AS registered, sh.state AS sheet_state,
         (sh.summary_n IS NOT NULL OR EXISTS (SELECT 1 FROM scores x WHERE x.sheet_id = sh.id)) AS entered,
         CASE WHEN sh.mode = 'summary' AND sh.state = ANY($4) THEN sh.summary_n END AS summary_n,
         coalesce(w.scored, 0) AS scored, coalesce(w."left", 0) AS "left", coalesce(w.with_pretest, 0) AS with_pretest
    FROM classrooms c
    LEFT JOIN registered r ON r.classroom_id = c.id
    LEFT JOIN score_sheets sh ON sh.classroom_id = c.id AND sh.study_id = $1 AND sh.wave_id = $2 AND sh.measure_id = $3
    LEFT JOIN rowed w ON w.classroom_id = c.id
   WHERE c.study_id = $1 AND c.arm IS NOT NULL`;
}

export interface AccountingScope {
  studyId: string;
  measureId: string;
  waveId: string;
  reads: readonly ('accepted' | 'submitted')[];
  /** The baseline wave whose score a student needs to be analysed, or null when the analysis does not adjust for it. */
  pretestWaveId: string | null;
}

/** Per classroom, what a run's classroom pass counted on the row sheets it read: scored outcomes and those with a pretest. */
export type ReadCounts = ReadonlyMap<string, { scored: number; withPretest: number }>;

/**
 * The accounting of the sheets as they stand (a run calls it in its own snapshot, so it counts exactly what it read,
 * and passes the counts its classroom pass already made).
 */
export async function accountFor(manager: EntityManager, scope: AccountingScope, read?: ReadCounts): Promise<Accounting> {
  const withPretest = scope.pretestWaveId !== null;
  const params: unknown[] = [scope.studyId, scope.waveId, scope.measureId, scope.reads];
  const rows: { classroom_id: string; arm: Arm; registered: number; sheet_state: SheetState | null; entered: boolean | null; summary_n: number | null; scored: number; left: number; with_pretest: number }[] = read
    ? await manager.query(standingsAfterRunSql, params)
    : await manager.query(standingsSql(withPretest), withPretest ? [...params, scope.pretestWaveId] : params);
  if (read) {
    for (const r of rows) {
      const counted = read.get(r.classroom_id);
      r.scored = counted?.scored ?? 0;
      r.with_pretest = withPretest ? (counted?.withPretest ?? 0) : 0;
    }
  }
  const standings = rows.map((r) => ({
    classroomId: r.classroom_id,
    arm: r.arm,
    registered: r.registered,
    sheetState: r.sheet_state,
    entered: r.entered === true,
    summaryN: r.summary_n,
    scored: r.scored,
    left: r.left,
    withPretest: r.with_pretest,
  }));
  return account(standings, scope.reads, withPretest);
}

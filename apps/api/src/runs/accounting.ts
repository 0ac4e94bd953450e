import type { EntityManager } from 'typeorm';
import { attrition } from '@evenhand/stats';
import { readSheetMoments } from '../score-sheets/sums.js';
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
 * Each classroom with an arm: its registered codes and its outcome sheet (state, summary n, whether anything was
 * entered: looked up only for an open sheet, the one state whose loss reason depends on it). What was read from its
 * rows comes from the sheet's sums (`ReadCounts`). $1 study, $2 outcome wave, $3 measure, $4 sheet states read.
 */
const standingsSql = `
  -- One pass over the registry, materialized: inlined, the planner sometimes reran the count per classroom (minutes at 8 000).
  WITH registered AS MATERIALIZED (SELECT classroom_id, count(*)::int AS n FROM students WHERE study_id = $1 GROUP BY classroom_id)
  SELECT c.id AS classroom_id, c.arm, coalesce(r.n, 0)::int AS registered, sh.state AS sheet_state,
         (sh.summary_n IS NOT NULL OR (sh.state = 'open' AND EXISTS (SELECT 1 FROM scores x WHERE x.sheet_id = sh.id))) AS entered,
         CASE WHEN sh.mode = 'summary' AND sh.state = ANY($4) THEN sh.summary_n END AS summary_n
    FROM classrooms c
    LEFT JOIN registered r ON r.classroom_id = c.id
    LEFT JOIN score_sheets sh ON sh.classroom_id = c.id AND sh.study_id = $1 AND sh.wave_id = $2 AND sh.measure_id = $3
   WHERE c.study_id = $1 AND c.arm IS NOT NULL`;

/** The row sheets read (classrooms with an arm) with the classroom's baseline sheet when read; $5 the baseline wave or null. */
const readSheetsSql = `
  SELECT sh.id, sh.classroom_id, bs.id AS pretest_sheet_id
    FROM score_sheets sh JOIN classrooms c ON c.id = sh.classroom_id AND c.arm IS NOT NULL
    LEFT JOIN score_sheets bs ON bs.classroom_id = sh.classroom_id AND bs.wave_id = $5 AND bs.measure_id = $3 AND bs.state = ANY($4)
   WHERE sh.study_id = $1 AND sh.wave_id = $2 AND sh.measure_id = $3 AND sh.state = ANY($4) AND sh.mode = 'rows'`;

export interface AccountingScope {
  studyId: string;
  measureId: string;
  waveId: string;
  reads: readonly ('accepted' | 'submitted')[];
  /** The baseline wave whose score a student needs to be analysed, or null when the analysis does not adjust for it. */
  pretestWaveId: string | null;
}

/** Per classroom, what was read from its row sheet: scored outcomes, those with a pretest, and rows marked as left without a score. */
export type ReadCounts = ReadonlyMap<string, { scored: number; withPretest: number; left: number }>;

/**
 * The accounting of the sheets as they stand (a run calls it in its own snapshot, so it counts exactly what it read,
 * and passes the counts its sheets' sums gave; the Checks read those sums here).
 */
export async function accountFor(manager: EntityManager, scope: AccountingScope, read?: ReadCounts): Promise<Accounting> {
  const withPretest = scope.pretestWaveId !== null;
  const rows: { classroom_id: string; arm: Arm; registered: number; sheet_state: SheetState | null; entered: boolean | null; summary_n: number | null }[] = await manager.query(standingsSql, [
    scope.studyId,
    scope.waveId,
    scope.measureId,
    scope.reads,
  ]);
  const counts = read ?? (await readCounts(manager, scope));
  const standings = rows.map((r) => {
    const counted = counts.get(r.classroom_id);
    return {
      classroomId: r.classroom_id,
      arm: r.arm,
      registered: r.registered,
      sheetState: r.sheet_state,
      entered: r.entered === true,
      summaryN: r.summary_n,
      scored: counted?.scored ?? 0,
      left: counted?.left ?? 0,
      withPretest: withPretest ? (counted?.withPretest ?? 0) : 0,
    };
  });
  return account(standings, scope.reads, withPretest);
}

/** What the row sheets in scope give, from their sums. */
async function readCounts(manager: EntityManager, scope: AccountingScope): Promise<ReadCounts> {
  const sheets: { id: string; classroom_id: string; pretest_sheet_id: string | null }[] = await manager.query(readSheetsSql, [
    scope.studyId,
    scope.waveId,
    scope.measureId,
    scope.reads,
    scope.pretestWaveId,
  ]);
  const moments = await readSheetMoments(
    manager,
    sheets.map((s) => ({ sheetId: s.id, pretestSheetId: s.pretest_sheet_id })),
  );
  return new Map(sheets.map((s) => {
    const m = moments.get(s.id)!;
    return [s.classroom_id, { scored: m.n, withPretest: m.pairs, left: m.left_n }];
  }));
}

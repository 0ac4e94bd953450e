import type { EntityManager } from 'typeorm';
import { attrition } from '@evenhand/stats';
import { byteOrder, readClassrooms, type ClassroomRead } from './gather.js';
import { arms, lossReasons, type Accounting, type Arm, type AttritionCheck, type LossReason, type PrimaryTest, type SheetState, type UnitAccount } from '@evenhand/entities';

/**
 * Who was analysed and who was lost, and why: the one definition the run stores (`results.accounting`), the Checks
 * show and the report and bundle repeat. `readClassrooms` (gather.ts) reads each randomised classroom; `account` (pure) turns those
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
    lostClassrooms: lostClassrooms.sort((x, y) => byteOrder(x.classroomId, y.classroomId)),
  };
}

export interface AccountingScope {
  studyId: string;
  measureId: string;
  waveId: string;
  reads: readonly ('accepted' | 'submitted')[];
  /** The baseline wave whose score a student needs to be analysed, or null when the analysis does not adjust for it. */
  pretestWaveId: string | null;
}

/**
 * The accounting of the sheets as they stand. A run passes the classrooms it read in its own snapshot, so it counts
 * exactly what it analysed; the Checks read them here.
 */
export async function accountFor(manager: EntityManager, scope: AccountingScope, read?: ClassroomRead[]): Promise<Accounting> {
  const classrooms =
    read ?? (await readClassrooms(manager, { studyId: scope.studyId, waveId: scope.waveId, measureId: scope.measureId, states: [...scope.reads], baselineWaveId: scope.pretestWaveId }));
  const withPretest = scope.pretestWaveId !== null;
  const standings = classrooms.map((c) => ({
    classroomId: c.classroomId,
    arm: c.arm,
    registered: c.registered,
    sheetState: c.sheetState,
    entered: c.entered,
    summaryN: c.summary?.n ?? null,
    scored: c.rows?.moments.n ?? 0,
    left: c.rows?.moments.left_n ?? 0,
    withPretest: withPretest ? (c.rows?.moments.pairs ?? 0) : 0,
  }));
  return account(standings, scope.reads, withPretest);
}

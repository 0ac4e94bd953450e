import type { DataSource } from 'typeorm';
import { evidenceVerdict, ratingRisks, type ArmCounts, type ArmPair, type AttritionBoundary, type ComparisonDescription } from '@evenhand/stats';
import { decidingTest, type Accounting, type Arm, type RunResults, type SessionUser, type StudyEvidence } from '@evenhand/entities';
import { accountingOf, studyChecks } from '../checks/service.js';
import { needsPretest } from '../runs/accounting.js';
import { listComparisons } from '../runs/comparisons.js';
import { findVisibleStudy } from '../studies/access.js';
import { analysedPerClassroomSql, confirmatoryComparisonsSql, deliverersSql, joinersSql, reassignmentCountSql } from './queries.js';

interface ComparisonRow {
  id: string;
  label: string;
  measure_id: string;
  wave_id: string;
  primary_test: 'welch' | 'student' | 'two-level';
  covariate: 'baseline' | 'none';
  measure_name: string;
  measure_scale: 'score' | 'yes-no';
  higher_is_better: boolean;
  run_id: string | null;
  run_state: 'finished' | 'locked' | null;
  results: (RunResults & { accounting?: Accounting | null }) | null;
  classroom_arms: Record<string, Arm> | null;
  input_sheet_ids: string[] | null;
  started_at: Date | null;
}

/** Analyses that account for students being clustered in the assigned units (the evidence standards' clustering rule). */
const clusterAware = new Set(['two-level', 'clustering-corrected', 'classroom-means', 'linear-probability']);

const pair = <T>(f: (arm: Arm) => T): ArmPair<T> => ({ intervention: f('intervention'), comparison: f('comparison') });

/**
 * The evidence verdict of each pre-specified comparison, from what Evenhand already holds: for a locked run, what the
 * run read (its accounting, arms, input sheets and the reassignments before it started); otherwise today's accepted
 * sheets, with the effect of the newest finished run when there is one. Baseline equivalence is the Checks' figure.
 */
export async function studyEvidence(db: DataSource, user: SessionUser, studyId: string, boundary: AttritionBoundary): Promise<StudyEvidence> {
  const study = await findVisibleStudy(db.manager, user, studyId);
  const checks = await studyChecks(db, user, studyId);
  // The sealed plan's pre-specified comparisons are made on first listing.
  await listComparisons(db, user, studyId);
  const rows: ComparisonRow[] = await db.query(confirmatoryComparisonsSql, [studyId]);
  const [draw]: { id: string }[] = await db.query(`SELECT id FROM draws WHERE study_id = $1`, [studyId]);
  const [baselineWave]: { id: string }[] = await db.query(`SELECT id FROM waves WHERE study_id = $1 AND kind = 'baseline' ORDER BY opens_on LIMIT 1`, [studyId]);
  const classrooms: { id: string; arm: Arm; teacher_id: string; site_id: string }[] = await db.query(deliverersSql, [studyId]);
  const clustered = study.unitOfAssignment !== 'student';

  const comparisons = [];
  for (const k of rows) {
    const locked = k.run_state === 'locked';
    const results = k.results;
    const sheets = locked ? (k.input_sheet_ids ?? []) : null;
    const pretest = needsPretest({ primaryTest: k.primary_test, covariate: k.covariate, scale: k.measure_scale, hasBaselineWave: Boolean(baselineWave) });
    // Who was analysed and lost: the locked run's stored accounting, else the accepted sheets as they stand (the Checks' own definition).
    const accounting = locked && results?.accounting ? results.accounting : (await accountingOf(db, { studyId, measureId: k.measure_id, waveId: k.wave_id, pretest: pretest ? baselineWave.id : null })).accounting;
    const [{ n: reassignments }]: { n: number }[] = await db.query(reassignmentCountSql, [studyId, locked ? k.started_at : null]);
    const perClassroom: { classroom_id: string; n: number }[] = await db.query(analysedPerClassroomSql, [studyId, k.wave_id, k.measure_id, sheets]);
    const [{ n: joiners }]: { n: number | null }[] = await db.query(joinersSql, [studyId, k.wave_id, k.measure_id, sheets]);

    // The arms a locked run read, never today's.
    const armOf = (c: { id: string; arm: Arm }): Arm | undefined => (locked && k.classroom_arms ? k.classroom_arms[c.id] : c.arm);
    const inArm = (arm: Arm) => classrooms.filter((c) => armOf(c) === arm);
    const analysed = new Map(perClassroom.map((r) => [r.classroom_id, r.n]));
    const arms = accounting.arms;
    const accountOf = (arm: Arm) => arms.find((a) => a.arm === arm);
    const studentCounts = arms.length === 2 ? pair<ArmCounts>((arm) => ({ randomised: accountOf(arm)!.students.randomised, analysed: accountOf(arm)!.students.analysed })) : null;
    let clusterCounts: ArmPair<ArmCounts> | null = null;
    if (study.unitOfAssignment === 'classroom' && arms.length === 2) {
      clusterCounts = pair((arm) => ({ randomised: accountOf(arm)!.classrooms.randomised, analysed: accountOf(arm)!.classrooms.analysed }));
    } else if (study.unitOfAssignment === 'school') {
      const lost = new Set(accounting.lostClassrooms.map((c) => c.classroomId));
      clusterCounts = pair((arm) => {
        const mine = inArm(arm);
        return { randomised: new Set(mine.map((c) => c.site_id)).size, analysed: new Set(mine.filter((c) => !lost.has(c.id)).map((c) => c.site_id)).size };
      });
    }
    // Groups of ten: the assigned units (classrooms, or schools) with 10 or more analysed students.
    const perUnit = new Map<string, number>();
    for (const c of classrooms) {
      const unit = study.unitOfAssignment === 'school' ? c.site_id : c.id;
      perUnit.set(unit, (perUnit.get(unit) ?? 0) + (analysed.get(c.id) ?? 0));
    }
    const sites = new Set(classrooms.filter((c) => (analysed.get(c.id) ?? 0) > 0).map((c) => c.site_id)).size;

    const measureChecks = checks.measures.find((m) => m.measureId === k.measure_id);
    const equivalence = measureChecks?.baselineEquivalence ?? null;
    const deciding = results ? decidingTest(results) : null;
    const description: ComparisonDescription = {
      randomised: Boolean(draw) && !(study.quasiExperimental && reassignments === 0),
      unitOfAssignment: study.unitOfAssignment,
      reassignments,
      boundary,
      clusters: clustered ? clusterCounts : null,
      students: studentCounts && studentCounts.intervention.randomised + studentCounts.comparison.randomised > 0 ? studentCounts : null,
      joiners: clustered ? joiners : null,
      baseline: !baselineWave ? 'not-measured' : equivalence ? { effectSize: equivalence.g, kind: equivalence.effectSize ?? 'hedges-g' } : null,
      adjustsForBaseline: results?.twoLevel ? results.twoLevel.covariate === 'baseline' : pretest,
      accountsForClustering: !clustered || (deciding ? clusterAware.has(deciding.analysis) : k.primary_test === 'two-level'),
      teachers: pair((arm) => [...new Set(inArm(arm).map((c) => c.teacher_id))]),
      schools: pair((arm) => [...new Set(inArm(arm).map((c) => c.site_id))]),
      effect: deciding ? { estimate: deciding.estimate, favourable: deciding.estimate !== 0 && deciding.estimate > 0 === k.higher_is_better, p: deciding.p, significant: deciding.significant } : null,
      sample: { groupsOfTenOrMore: [...perUnit.values()].filter((n) => n >= 10).length, sites },
    };
    comparisons.push({
      comparisonId: k.id,
      label: k.label,
      measureName: k.measure_name,
      runId: k.run_id,
      locked,
      verdict: evidenceVerdict(description),
      // Risks are about data still arriving: a locked result has none.
      risks: locked ? [] : ratingRisks(description),
    });
  }
  return { studyId, boundary, comparisons };
}

/**
 * The verdict a run's bundle carries: its comparison's, when the verdict reads this run (the locked one, else the newest
 * finished), judged against the cautious boundary; null otherwise (an exploratory comparison, or an older run).
 */
export async function runEvidence(db: DataSource, user: SessionUser, runId: string) {
  const [run]: { study_id: string }[] = await db.query(`SELECT study_id FROM runs WHERE id = $1`, [runId]);
  if (!run) return null;
  const answer = await studyEvidence(db, user, run.study_id, 'cautious');
  const mine = answer.comparisons.find((c) => c.runId === runId);
  return mine ? { boundary: answer.boundary, ...mine.verdict } : null;
}

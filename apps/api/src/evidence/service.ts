import type { DataSource, EntityManager } from 'typeorm';
import { evidenceVerdict, ratingRisks, type ArmCounts, type ArmPair, type AttritionBoundary, type ComparisonDescription } from '@evenhand/stats';
import {
  decidingTest,
  planBoundary,
  type Accounting,
  type Arm,
  type BoundaryChoice,
  type ComparisonEvidence,
  type RunResults,
  type SessionUser,
  type StudyEvidence,
  type VerdictAnswer,
} from '@evenhand/entities';
import { DrawEntity, PlanDraftEntity, WaveEntity, type StudyEntity } from '@evenhand/entities/orm';
import { accountingOf, studyChecks } from '../checks/service.js';
import { currentPlan } from '../plan/service.js';
import { needsPretest } from '../runs/accounting.js';
import { listComparisons } from '../runs/comparisons.js';
import { findVisibleStudy } from '../studies/access.js';
import {
  analysedPerClassroomSql,
  confirmatoryComparisonsSql,
  deliverersSql,
  joinersSql,
  planVersionBoundarySql,
  reassignmentCountSql,
  runStudySql,
  storedVerdictsSql,
  storeVerdictsSql,
  type StoredVerdictRow,
} from './queries.js';

/** What the verdict reads through: the pool, or a transaction (a lock stores its verdicts in its own). */
type Reader = Pick<DataSource, 'query' | 'manager'>;
const within = (manager: EntityManager): Reader => ({ query: ((sql: string, params?: unknown[]) => manager.query(sql, params)) as DataSource['query'], manager });

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
  plan_version: number | null;
}

/** Analyses that account for students being clustered in the assigned units (the evidence standards' clustering rule). */
const clusterAware = new Set(['two-level', 'clustering-corrected', 'classroom-means', 'linear-probability']);

const pair = <T>(f: (arm: Arm) => T): ArmPair<T> => ({ intervention: f('intervention'), comparison: f('comparison') });

interface Described {
  k: ComparisonRow;
  locked: boolean;
  /** The verdicts stored at its lock (then the comparison is not described again), else null. */
  stored: StoredVerdictRow | null;
  description: Omit<ComparisonDescription, 'boundary'> | null;
}

/**
 * Each pre-specified comparison described from what Evenhand already holds: for a locked run (or `locking`, the run being
 * locked), what the run read (its accounting, arms, input sheets and the reassignments before it started); otherwise
 * today's accepted sheets, with the effect of the newest finished run when there is one. Baseline equivalence is the
 * Checks' figure. A locked comparison whose verdicts were stored at its lock comes with them, undescribed.
 */
async function describeComparisons(db: Reader, user: SessionUser, study: StudyEntity, locking: string | null = null): Promise<Described[]> {
  const studyId = study.id;
  const rows: ComparisonRow[] = await db.query(confirmatoryComparisonsSql, [studyId, locking]);
  const isLocked = (k: ComparisonRow) => k.run_state === 'locked' || (locking !== null && k.run_id === locking);
  const lockedRuns = rows.filter(isLocked).map((k) => k.run_id!);
  const stored = new Map<string, StoredVerdictRow>();
  if (lockedRuns.length) for (const v of (await db.query(storedVerdictsSql, [lockedRuns])) as StoredVerdictRow[]) stored.set(v.run_id, v);
  const described: Described[] = rows.filter((k) => stored.has(k.run_id!)).map((k) => ({ k, locked: true, stored: stored.get(k.run_id!)!, description: null }));
  const toDescribe = rows.filter((k) => !stored.has(k.run_id!));
  if (toDescribe.length === 0) return described;
  const checks = await studyChecks(db, user, studyId);
  const draw = await db.manager.findOneBy(DrawEntity, { studyId });
  const baselineWave = await db.manager.findOne(WaveEntity, { where: { studyId, kind: 'baseline' }, order: { opensOn: 'ASC' } });
  const classrooms: { id: string; arm: Arm; teacher_id: string; site_id: string }[] = await db.query(deliverersSql, [studyId]);
  const clustered = study.unitOfAssignment !== 'student';

  for (const k of toDescribe) {
    const locked = isLocked(k);
    const results = k.results;
    const sheets = locked ? (k.input_sheet_ids ?? []) : null;
    const pretest = needsPretest({ primaryTest: k.primary_test, covariate: k.covariate, scale: k.measure_scale, hasBaselineWave: Boolean(baselineWave) });
    // Who was analysed and lost: the locked run's stored accounting, else the accepted sheets as they stand (the Checks' own definition).
    const accounting = locked && results?.accounting ? results.accounting : (await accountingOf(db, { studyId, measureId: k.measure_id, waveId: k.wave_id, pretest: pretest ? baselineWave!.id : null })).accounting;
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
    described.push({
      k,
      locked,
      stored: null,
      description: {
        randomised: Boolean(draw) && !(study.quasiExperimental && reassignments === 0),
        unitOfAssignment: study.unitOfAssignment,
        reassignments,
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
      },
    });
  }
  // In the confirmatory comparisons' own order.
  return rows.map((k) => described.find((d) => d.k === k)!);
}

const CAUTIOUS_WHY = 'the intervention could affect which students leave';

interface PlanChoice {
  boundary: AttritionBoundary;
  reason: string;
  /** The sealed version that registers it; null for a draft's choice ('draft') or the default before any ('none'). */
  version: number | null;
  source: 'sealed' | 'draft' | 'none';
}

/** Which boundary applies and why, in one sentence: the plan's (with its reason), or the other one asked for. */
export function boundaryChoice(plan: PlanChoice, asked?: AttritionBoundary): BoundaryChoice {
  const boundary = asked ?? plan.boundary;
  const whose = plan.source === 'sealed' ? `plan version ${plan.version}` : 'the plan’s draft';
  const registers = plan.source === 'sealed' ? 'registers' : 'chooses';
  let explanation: string;
  if (boundary !== plan.boundary) {
    explanation = `Judged against the ${boundary} attrition boundary, as asked here; ${plan.source === 'none' ? 'until a plan chooses one, the cautious one applies' : `${whose} ${registers} the ${plan.boundary} one`}.`;
  } else if (plan.source === 'none') {
    explanation = `Judged against the cautious attrition boundary, the one that applies until a plan chooses: ${CAUTIOUS_WHY}.`;
  } else {
    explanation =
      boundary === 'cautious'
        ? `Judged against the cautious attrition boundary, which ${whose} ${registers}: ${CAUTIOUS_WHY}.`
        : `Judged against the optimistic attrition boundary, which ${whose} ${registers} with the reason “${plan.reason}”.`;
  }
  return { boundary, chosenBy: boundary === plan.boundary ? 'plan' : 'reader', planVersion: plan.version, reason: plan.reason, explanation };
}

/** The boundary the plan now registers: the latest sealed version's, else the draft's, else the cautious default. */
async function planChoiceOf(manager: EntityManager, studyId: string): Promise<PlanChoice> {
  const sealed = await currentPlan(manager, studyId);
  if (sealed) return { ...planBoundary(sealed.content), version: sealed.version, source: 'sealed' };
  const draft = await manager.findOneBy(PlanDraftEntity, { studyId });
  return draft ? { ...planBoundary(draft.content), version: null, source: 'draft' } : { boundary: 'cautious', reason: '', version: null, source: 'none' };
}

/** The boundary of the plan version a run followed (its registered analysis), cautious for plans sealed before the choice. */
async function runPlanChoice(db: Reader, studyId: string, version: number | null): Promise<PlanChoice> {
  if (version === null) return { boundary: 'cautious', reason: '', version: null, source: 'none' };
  const [row]: { boundary: AttritionBoundary | null; reason: string | null }[] = await db.query(planVersionBoundarySql, [studyId, version]);
  return { ...planBoundary({ attritionBoundary: row?.boundary ?? undefined, attritionBoundaryReason: row?.reason ?? undefined }), version, source: 'sealed' };
}

/** Stores a locked comparison's verdicts, judged against both boundaries, with its plan's choice. */
async function storeVerdicts(db: Reader, studyId: string, d: Described & { description: NonNullable<Described['description']> }): Promise<StoredVerdictRow> {
  const plan = await runPlanChoice(db, studyId, d.k.plan_version);
  const row: StoredVerdictRow = {
    run_id: d.k.run_id!,
    plan_version: plan.version,
    boundary: plan.boundary,
    boundary_reason: plan.reason,
    cautious: evidenceVerdict({ ...d.description, boundary: 'cautious' }),
    optimistic: evidenceVerdict({ ...d.description, boundary: 'optimistic' }),
  };
  await db.query(storeVerdictsSql, [row.run_id, row.plan_version, row.boundary, row.boundary_reason, row.cautious, row.optimistic]);
  // Another reader may have stored it first: theirs stands.
  const [stored]: StoredVerdictRow[] = await db.query(storedVerdictsSql, [[row.run_id]]);
  return stored;
}

const storedChoice = (v: StoredVerdictRow): PlanChoice => ({ boundary: v.boundary, reason: v.boundary_reason, version: v.plan_version, source: v.plan_version === null ? 'none' : 'sealed' });

/**
 * Inside a run's lock: its comparison's verdict, judged against both boundaries, is stored with the run, so nothing
 * that changes later (a sheet accepted, a teacher changed, a roster import) moves a locked result's verdict.
 */
export async function storeLockedVerdicts(manager: EntityManager, user: SessionUser, studyId: string, runId: string): Promise<void> {
  const db = within(manager);
  const study = await findVisibleStudy(manager, user, studyId);
  const mine = (await describeComparisons(db, user, study, runId)).find((d) => d.k.run_id === runId);
  if (mine?.description) await storeVerdicts(db, studyId, { ...mine, description: mine.description });
}

/**
 * The evidence verdict of each pre-specified comparison, judged against `asked` or else the boundary the plan registers.
 * A locked result answers with the verdict stored when it was locked (a result locked before verdicts were stored gets
 * them now, once).
 */
export async function studyEvidence(db: DataSource, user: SessionUser, studyId: string, asked?: AttritionBoundary): Promise<StudyEvidence> {
  const study = await findVisibleStudy(db.manager, user, studyId);
  // The sealed plan's pre-specified comparisons are made on first listing.
  await listComparisons(db, user, studyId);
  const plan = await planChoiceOf(db.manager, studyId);
  const described = await describeComparisons(db, user, study);

  const comparisons: ComparisonEvidence[] = [];
  for (const d of described) {
    const base = { comparisonId: d.k.id, label: d.k.label, measureName: d.k.measure_name, runId: d.k.run_id, locked: d.locked };
    if (d.locked) {
      const v = d.stored ?? (await storeVerdicts(db, studyId, { ...d, description: d.description! }));
      const choice = boundaryChoice(storedChoice(v), asked);
      // Risks are about data still arriving: a locked result has none.
      comparisons.push({ ...base, boundary: choice, verdict: v[choice.boundary], risks: [] });
    } else {
      const choice = boundaryChoice(plan, asked);
      const description = { ...d.description!, boundary: choice.boundary };
      comparisons.push({ ...base, boundary: choice, verdict: evidenceVerdict(description), risks: ratingRisks(description) });
    }
  }
  return { studyId, boundary: asked ?? plan.boundary, plan: boundaryChoice(plan), comparisons };
}

/**
 * The verdict a run's bundle carries: for a locked run the one stored at its lock, against its plan's boundary; for a
 * finished run its comparison's live verdict when the verdict reads this run (the newest finished), against the plan's
 * boundary; null otherwise (an exploratory comparison, or an older run).
 */
export async function runEvidence(db: DataSource, user: SessionUser, runId: string): Promise<(VerdictAnswer & { boundary: AttritionBoundary; boundaryExplanation: string }) | null> {
  const [run]: { study_id: string }[] = await db.query(runStudySql, [runId]);
  if (!run) return null;
  const answer = await studyEvidence(db, user, run.study_id);
  const mine = answer.comparisons.find((c) => c.runId === runId);
  return mine ? { boundary: mine.boundary.boundary, boundaryExplanation: mine.boundary.explanation, ...mine.verdict } : null;
}

import {
  ENGINE_VERSION,
  DEFAULT_ICC_ACHIEVEMENT,
  DEFAULT_ICC_BEHAVIOR,
  ancovaFromSummaries,
  clusterAdjusted,
  hedgesGFromSummary,
  iccFromSummaries,
  improvementIndex,
  isSubstantivelyImportant,
  leveneFromDeviations,
  mannWhitneyFromRanks,
  mergeAllSummaries,
  randomEffects,
  shapiroWilk,
  studentTFromSummary,
  tInterval,
  twoLevelFromMoments,
  varianceRatioFFromSummary,
  welchT,
  welchTFromSummary,
  type Summary,
} from '@evenhand/stats';
import { arms, type Arm, type Deciding, type PlanContent, type PrimaryTest, type RunResults } from '@evenhand/entities';
import { ClusteredAnalysisError, assignedUnits, clusterRobust, groupBy, outcomeUnits, siteEstimatesFromComponents, twoLevel, type AssignedUnits, type ModelEffect } from './clustered.js';
import { NORMALITY_SAMPLE, byteOrder, type ClassroomAggregate, type Gathered } from './gather.js';
import { YesNoAnalysisError, yesNoAnalysis } from './yes-no.js';

export interface AnalysisContext {
  kind: 'monitoring' | 'confirmatory';
  plan: PlanContent;
  planVersion: number | null;
  unitOfAssignment: 'student' | 'classroom' | 'school';
  quasiExperimental: boolean;
  comparison: { unitOfAnalysis: 'student' | 'classroom' | 'school'; primaryTest: PrimaryTest; covariate: 'baseline' | 'none' };
  measure: { id: string; name: string; kind: 'achievement' | 'behaviour'; higherIsBetter: boolean; scale: 'score' | 'yes-no' };
  wave: { id: string; name: string };
}

/** A run that cannot be computed (too few students, no variation…) fails with this message. */
export class AnalysisError extends Error {}

const sdOf = (s: Summary) => Math.sqrt(s.m2 / (s.n - 1));
const toGroup = (s: Summary) => ({ n: s.n, mean: s.mean, sd: sdOf(s) });
const summaryOf = (c: ClassroomAggregate): Summary => ({ n: c.n, mean: c.mean ?? 0, m2: c.m2 ?? 0 });

function armSummary(classrooms: ClassroomAggregate[], arm: Arm): Summary | null {
  const parts = classrooms.filter((c) => c.arm === arm && c.n > 0).map(summaryOf);
  return parts.length ? mergeAllSummaries(parts) : null;
}

const armLabel: Record<Arm, string> = { intervention: 'intervention', comparison: 'comparison' };

const CLASSROOM_MEANS_EQUAL = 'every classroom in each arm has the same mean score, so the classroom means do not vary and their t statistic is undefined';

/** Welch's t on the classroom means, or null with the reason in `notComputed` when the means do not vary within either arm. */
function classroomMeansTest(intervention: number[], comparison: number[], opts: { alternative: PlanContent['alternative']; confidence: number }, notComputed: { check: string; why: string }[]) {
  const varies = (xs: number[]) => xs.some((x) => x !== xs[0]);
  if (!varies(intervention) && !varies(comparison)) {
    notComputed.push({ check: 'classroom means', why: `Not computed: ${CLASSROOM_MEANS_EQUAL}.` });
    return null;
  }
  return welchT(intervention, comparison, opts);
}

/**
 * Computes a comparison from what `gather` read: the pre-registered primary test first, then effect size,
 * clustering correction, sensitivity checks, diagnostics, per-site estimates and their pooled estimate.
 */
export function analyse(ctx: AnalysisContext, data: Gathered): RunResults {
  const { plan } = ctx;
  const s1 = armSummary(data.classrooms, 'intervention');
  const s2 = armSummary(data.classrooms, 'comparison');
  const yesNoMeasure = ctx.measure.scale === 'yes-no';
  for (const [arm, s] of [['intervention', s1], ['comparison', s2]] as const) {
    if (!s || s.n < 2) throw new AnalysisError(`The ${armLabel[arm]} arm has fewer than 2 students with an outcome score in the sheets this run may use`);
    // An arm whose students all answered yes (or all no) is a defined yes/no table; only a score needs spread in each arm.
    if (!(s.m2 > 0) && !yesNoMeasure) throw new AnalysisError(`Every student in the ${armLabel[arm]} arm has the same score; the comparison is undefined`);
  }
  const a = s1!;
  const b = s2!;
  if (yesNoMeasure && !(a.m2 + b.m2 > 0)) {
    const answers = (s: Summary) => (s.mean === 1 ? 'yes' : 'no');
    throw new AnalysisError(
      answers(a) === answers(b)
        ? `Every student in both arms answered ${answers(a)}: the difference is 0 percentage points and Fisher’s exact p is 1, but no registered test can compare arms without any spread`
        : `Every intervention student answered ${answers(a)} and every comparison student ${answers(b)}: with no spread in either arm the registered test’s standard error is 0, so it is undefined`,
    );
  }
  const opts = { alternative: plan.alternative, confidence: 1 - plan.alpha };
  const ci95 = { alternative: plan.alternative, confidence: 0.95 };
  const welch = welchTFromSummary(toGroup(a), toGroup(b), ci95);
  const student = studentTFromSummary(toGroup(a), toGroup(b), ci95);
  const g = hedgesGFromSummary(toGroup(a), toGroup(b));
  const notes: string[] = [];
  const cautions: string[] = [];

  // Each arm's scored classrooms and their means, once: at 80 000 classrooms every pass over them counts.
  const scoredIn: Record<Arm, ClassroomAggregate[]> = { intervention: [], comparison: [] };
  for (const c of data.classrooms) if (c.n > 0) scoredIn[c.arm].push(c);
  const meansIn: Record<Arm, number[]> = { intervention: scoredIn.intervention.map((c) => c.mean as number), comparison: scoredIn.comparison.map((c) => c.mean as number) };
  const perClass = (arm: Arm) => scoredIn[arm];
  const meansOf = (arm: Arm) => meansIn[arm];
  // A sensitivity check that cannot be computed says so, and why; the run goes on.
  const notComputed: { check: string; why: string }[] = [];
  const enoughClassrooms = meansOf('intervention').length >= 2 && meansOf('comparison').length >= 2;
  const classroomMeans = enoughClassrooms ? classroomMeansTest(meansOf('intervention'), meansOf('comparison'), ci95, notComputed) : null;

  // The analyses that match a cluster-assigned design: the two-level model and, as a sensitivity check, CR2 errors.
  let assigned: AssignedUnits | null = null;
  let model: RunResults['twoLevel'] = null;
  let modelEffect: ModelEffect | null = null;
  let robust: RunResults['sensitivity']['clusterRobust'] = null;
  const twoLevelRegistered = ctx.comparison.primaryTest === 'two-level';
  if (twoLevelRegistered && ctx.unitOfAssignment === 'student') {
    throw new AnalysisError('The two-level model nests students in the assigned classrooms or schools, but this study assigned students one by one');
  }
  if (ctx.unitOfAssignment !== 'student') {
    assigned = assignedUnits(data.classrooms, ctx.unitOfAssignment, ctx.comparison.covariate === 'baseline' && data.pairs !== null);
    notes.push(...assigned.notes);
    try {
      ({ model, effect: modelEffect } = twoLevel(assigned, opts));
    } catch (e) {
      if (!(e instanceof ClusteredAnalysisError)) throw e;
      // A yes/no measure is decided by the linear probability regression, so the model is only a check there.
      if (twoLevelRegistered && !yesNoMeasure) throw new AnalysisError(e.message);
      notComputed.push({ check: 'two-level model', why: e.message });
    }
    const r = clusterRobust(assigned, ci95);
    if (typeof r === 'string') notComputed.push({ check: 'cluster-robust regression', why: r });
    else robust = r;
    if (model?.boundary) notes.push('The two-level model estimated no variation between units beyond what their students bring (τ² = 0); its degrees of freedom then rest on the students alone.');
  }

  // The primary test as registered, at the registered unit of analysis.
  let primaryBase;
  if (twoLevelRegistered && model) {
    const m = model;
    primaryBase = { t: m.t, df: m.df, p: m.p, meanDifference: m.estimate, se: m.se, ci: m.ci, confidence: m.confidence, alternative: m.alternative };
  } else if (ctx.comparison.unitOfAnalysis === 'student') {
    primaryBase = (ctx.comparison.primaryTest === 'student' ? studentTFromSummary : welchTFromSummary)(toGroup(a), toGroup(b), opts);
  } else {
    if (!enoughClassrooms) throw new AnalysisError('A classroom-level analysis needs at least 2 classrooms with scores in each arm');
    if (!classroomMeans) throw new AnalysisError(`A classroom-level analysis is undefined here: ${CLASSROOM_MEANS_EQUAL}`);
    primaryBase = welchT(meansOf('intervention'), meansOf('comparison'), opts);
  }
  // A yes/no run whose model could not be fitted (see notComputed) names the test its figures here come from.
  const primaryTest = twoLevelRegistered && !model ? 'welch' : ctx.comparison.primaryTest;
  const primary = { ...primaryBase, test: primaryTest, significant: primaryBase.p < plan.alpha };

  // Clustering: classrooms or schools were assigned but students analysed.
  let clustering: RunResults['clustering'] = null;
  const clusters = data.classrooms.filter((c) => c.n > 0);
  let observedIcc: number | null = null;
  if (clusters.length >= 3 && clusters.every((c) => c.n >= 2)) {
    try {
      observedIcc = iccFromSummaries(clusters.map(summaryOf)).icc;
    } catch {
      notes.push('The observed ICC could not be estimated from these classrooms.');
    }
  }
  if (ctx.unitOfAssignment !== 'student' && ctx.comparison.unitOfAnalysis === 'student') {
    const fallback = ctx.measure.kind === 'achievement' ? DEFAULT_ICC_ACHIEVEMENT : DEFAULT_ICC_BEHAVIOR;
    let icc = plan.iccSource === 'assumed' && plan.icc !== null ? plan.icc : fallback;
    let iccSource = plan.iccSource;
    if (plan.iccSource === 'observed') {
      if (observedIcc === null) {
        iccSource = 'default';
        notes.push('The observed ICC was not available, so the standard default was used.');
      } else icc = Math.max(0, observedIcc);
    }
    const clusterCount = (arm: Arm) => new Set(perClass(arm).map((c) => (ctx.unitOfAssignment === 'school' ? c.siteId : c.classroomId))).size;
    const adj = clusterAdjusted({ g: g.g, n1: a.n, n2: b.n, clusters1: clusterCount('intervention'), clusters2: clusterCount('comparison'), icc });
    // It decides the result, so it follows the plan's sidedness: by the t distribution's symmetry the one-sided p is
    // half the two-sided one in the registered direction, and one minus that half against it.
    const p = plan.alternative === 'two-sided' ? adj.p : (plan.alternative === 'greater') === adj.tAdjusted > 0 ? adj.p / 2 : 1 - adj.p / 2;
    // The student-level interval widened by the same factor as t: the corrected t is the difference over this SE.
    const diff = primary.meanDifference;
    const ci: [number, number] | undefined = adj.tAdjusted !== 0 ? tInterval(diff, Math.abs(diff / adj.tAdjusted), adj.df, opts.confidence, plan.alternative) : undefined;
    clustering = {
      icc,
      iccSource,
      tAdjusted: adj.tAdjusted,
      df: adj.df,
      p,
      significant: p < plan.alpha,
      averageClusterSize: adj.averageClusterSize,
      designEffect: adj.designEffect,
      observedIcc,
      ...(ci ? { ci } : {}),
    };
  }

  // Rank, spread and normality checks from what SQL aggregated over the distinct scores; ANCOVA from paired sums.
  let mw: RunResults['sensitivity']['mannWhitney'] = null;
  let leveneMean: RunResults['diagnostics']['leveneMean'] = null;
  let leveneMedian: RunResults['diagnostics']['leveneMedian'] = null;
  let shapiro: RunResults['diagnostics']['shapiroWilk'] = null;
  let adjusted: RunResults['sensitivity']['ancova'] = null;
  const v1 = data.values.intervention;
  const v2 = data.values.comparison;
  if (v1 && v2 && v1.n >= 2 && v2.n >= 2 && data.ranks) {
    const m = mannWhitneyFromRanks({ n1: v1.n, n2: v2.n, ...data.ranks }, { alternative: plan.alternative });
    mw = { u: m.u, z: m.z, p: m.p, method: m.method };
    const lm = leveneFromDeviations([v1.deviations.mean, v2.deviations.mean], 'mean');
    const lmed = leveneFromDeviations([v1.deviations.median, v2.deviations.median], 'median');
    leveneMean = { statistic: lm.statistic, df1: lm.df1, df2: lm.df2, p: lm.p };
    leveneMedian = { statistic: lmed.statistic, df1: lmed.df1, df2: lmed.df2, p: lmed.p };
    if (yesNoMeasure) {
      notes.push('A yes/no answer is 0 or 1, so its normality is not tested.');
    } else if (v1.n >= 3 && v2.n >= 3) {
      shapiro = arms.map((arm) => ({ arm, ...shapiroWilk(data.values[arm]!.normalitySample) }));
      const sampled = arms.filter((arm) => data.values[arm]!.n > NORMALITY_SAMPLE);
      if (sampled.length) {
        notes.push(
          `Shapiro–Wilk is validated for 3 to ${NORMALITY_SAMPLE.toLocaleString('en-US')} values (Royston 1995), so in ${sampled.length === 2 ? 'each arm' : `the ${armLabel[sampled[0]]} arm`} it was computed on ${NORMALITY_SAMPLE.toLocaleString('en-US')} students drawn at random without replacement, a common practice: the ranks of the sorted outcomes come from Floyd's algorithm seeded with the data hash, a colon and the arm, so anyone can draw the same sample from the bundle.`,
        );
      }
    } else notes.push('Shapiro–Wilk needs at least 3 values per arm; it was not computed.');
  } else notes.push('Each arm needs at least 2 student rows for the rank and spread checks; they were not computed.');
  if (ctx.comparison.covariate === 'baseline' && data.pairs) {
    const p1 = data.pairs.intervention;
    const p2 = data.pairs.comparison;
    if (p1 && p2 && p1.n >= 2 && p2.n >= 2) {
      const r = ancovaFromSummaries(p1, p2, ci95);
      adjusted = { adjustedDifference: r.adjustedDifference, se: r.se, t: r.t, df: r.df, p: r.p, ci: r.ci, g: r.g, n: p1.n + p2.n };
      if (p1.n + p2.n < data.analysed) notes.push(`The baseline adjustment uses the ${p1.n + p2.n} students who also have a baseline score.`);
    } else notes.push('Too few students have a baseline score for the baseline-adjusted estimate.');
  }
  if (data.classrooms.some((c) => c.fromSummary)) notes.push('Some classrooms reported only a summary (n, mean, SD); they count in the t tests and effect sizes but not in rank, median, normality or baseline-adjusted checks.');

  // Per-site estimates and their random-effects pooled estimate; in a cluster-assigned study each site's classrooms
  // are weighted by the two-level model's variance components, so a site's estimate respects the clustering.
  const components = assigned && ctx.unitOfAssignment === 'classroom' ? unadjustedComponents(data.classrooms) : null;
  const siteRows = components ? siteEstimatesFromComponents(data.classrooms, components, pooledSd(a, b), a.n + b.n) : studentSiteEstimates(data.classrooms);
  // By school name in character-code order (the classrooms come in the order of their IDs).
  siteRows.sort((x, y) => byteOrder(x.siteName, y.siteName) || byteOrder(x.siteId, y.siteId));
  let pooled: RunResults['pooled'] = null;
  if (siteRows.length >= 2) {
    const re = randomEffects(siteRows.map((s) => ({ y: s.g, v: s.se * s.se })));
    re.weights.forEach((w, i) => (siteRows[i].weight = w));
    pooled = { estimate: re.estimate, se: re.se, ci: re.ci, p: re.p, tau2: re.tau2, q: re.q, df: re.df, pQ: re.pQ, i2: re.i2 };
  } else notes.push('Fewer than two sites have both arms, so no pooled estimate across sites.');

  cautions.push('A p-value is not the size or the importance of an effect: read it with the effect size and its interval.');
  cautions.push('These results describe groups of students, not individual students or teachers: do not use them to evaluate teachers or to place students.');
  if (ctx.kind === 'monitoring') cautions.unshift('Interim — not confirmatory. This monitoring run may change as data arrive and must not be reported as the study’s result.');
  if (ctx.quasiExperimental) cautions.push('Assignment was changed by hand after the random draw, so this is a quasi-experimental comparison: baseline equivalence must be shown before any causal reading.');
  if (a.n < 30 || b.n < 30 || perClass('intervention').length < 5 || perClass('comparison').length < 5) {
    cautions.push('The samples are small: the estimate is imprecise and conclusions are limited.');
  }
  cautions.push('Student records are protected by law and district policy; share these results as your district’s data-privacy rules and research review board allow.');

  let deciding: Deciding = decidingOf(primary, clustering, twoLevelRegistered, ctx.comparison.unitOfAnalysis);
  // A yes/no measure is decided on the difference in proportions (cluster-robust when classrooms or schools were assigned).
  let yesNo: RunResults['yesNo'] = null;
  if (ctx.measure.scale === 'yes-no') {
    try {
      const y = yesNoAnalysis(data.classrooms, {
        alpha: plan.alpha,
        alternative: plan.alternative,
        yesIsGood: ctx.measure.higherIsBetter,
        measureKind: ctx.measure.kind,
        unitOfAssignment: ctx.unitOfAssignment,
      });
      ({ yesNo, deciding } = y);
      notes.push(...y.notes);
    } catch (e) {
      if (e instanceof YesNoAnalysisError) throw new AnalysisError(e.message);
      throw e;
    }
  }
  const shownEffect = modelEffect && twoLevelRegistered ? modelEffect : { g: g.g, ci: g.ci as [number, number], se: g.se };

  return {
    engineVersion: ENGINE_VERSION,
    planVersion: ctx.planVersion,
    measure: ctx.measure,
    wave: ctx.wave,
    alpha: plan.alpha,
    descriptives: arms.map((arm) => {
      const s = arm === 'intervention' ? a : b;
      const q = data.values[arm]?.quantiles ?? null;
      return {
        arm,
        classrooms: perClass(arm).length,
        students: s.n,
        mean: s.mean,
        sd: sdOf(s),
        se: sdOf(s) / Math.sqrt(s.n),
        quantiles: q ? { min: q[0], q1: q[1], median: q[2], q3: q[3], max: q[4] } : null,
      };
    }),
    primary,
    deciding,
    twoLevel: model,
    yesNo,
    effectSize: { ...shownEffect, improvementIndex: improvementIndex(shownEffect.g), substantivelyImportant: isSubstantivelyImportant(shownEffect.g) },
    clustering,
    sensitivity: {
      student,
      welch,
      mannWhitney: mw,
      ancova: adjusted,
      classroomMeans: classroomMeans ? { ...classroomMeans, classrooms1: meansOf('intervention').length, classrooms2: meansOf('comparison').length } : null,
      clusterRobust: robust,
      studentLevelEffect: shownEffect === modelEffect ? { g: g.g, ci: g.ci as [number, number], se: g.se } : null,
      notComputed,
    },
    diagnostics: { leveneMean, leveneMedian, varianceRatio: b.m2 > 0 ? varianceRatioFFromSummary(toGroup(a), toGroup(b)) : null, shapiroWilk: shapiro, notes },
    sites: siteRows,
    pooled,
    cautions,
  };
}

const pooledSd = (a: Summary, b: Summary) => Math.sqrt((a.m2 + b.m2) / (a.n + b.n - 2));

/** The deciding analysis: the registered two-level model; else the clustering-corrected p when clusters were assigned but students compared; else the registered test. */
function decidingOf(primary: RunResults['primary'], clustering: RunResults['clustering'], twoLevelRegistered: boolean, unitOfAnalysis: 'student' | 'classroom' | 'school'): Deciding {
  const base = { estimate: primary.meanDifference, confidence: primary.confidence, alternative: primary.alternative };
  if (!twoLevelRegistered && clustering) {
    return { ...base, analysis: 'clustering-corrected', p: clustering.p, df: clustering.df, ci: clustering.ci ?? null, significant: clustering.significant };
  }
  const analysis = twoLevelRegistered ? 'two-level' : unitOfAnalysis === 'student' ? primary.test : 'classroom-means';
  return { ...base, analysis, p: primary.p, df: primary.df, ci: primary.ci, significant: primary.significant };
}

/** Variance components of the outcome between and within classrooms, without pretest or blocks: the per-site weights. */
function unadjustedComponents(classrooms: ClassroomAggregate[]): { tau2: number; sigma2: number } | null {
  const units = outcomeUnits(classrooms.filter((c) => c.n > 0), false);
  try {
    const m = twoLevelFromMoments(units);
    return { tau2: m.tau2, sigma2: m.sigma2 };
  } catch {
    return null;
  }
}

/** Students assigned one by one: each site's Hedges' g over its students. */
function studentSiteEstimates(classrooms: ClassroomAggregate[]): RunResults['sites'] {
  return [...groupBy(classrooms, (c) => c.siteId)].flatMap(([siteId, rows]) => {
    const x = armSummary(rows, 'intervention');
    const y = armSummary(rows, 'comparison');
    if (!x || !y || x.n < 2 || y.n < 2 || !(x.m2 + y.m2 > 0)) return [];
    const e = hedgesGFromSummary(toGroup(x), toGroup(y));
    return [{ siteId, siteName: rows[0].siteName, n1: x.n, n2: y.n, mean1: x.mean, mean2: y.mean, g: e.g, se: e.se, ci: e.ci as [number, number], weight: 0 }];
  });
}

import { z } from 'zod';
import { accountingSchema } from './accounting.js';
import { idSchema, plainText, timeZoneSchema } from './common.js';
import { primaryTests } from './plan.js';
import { armSchema } from './studies.js';

/** A cron expression (minute hour day month weekday) for automatic monitoring runs while the wave is open. */
const scheduleCronSchema = z
  .string()
  .trim()
  .regex(/^(\S+\s+){4}\S+$/, 'Use five cron fields (minute, hour, day of month, month, weekday), e.g. “0 2 1 * *” for 02:00 on the first of each month')
  .nullable()
  .default(null);

/** The plain choices a monitoring schedule offers; each writes a cron expression, and 'custom' takes one as typed. */
export type MonitoringRhythm = { kind: 'weekdays' | 'mondays'; hour: number; minute: number } | { kind: 'custom'; cron: string };

const rhythmDays = { weekdays: '1-5', mondays: '1' } as const;

/** The cron expression of a plain choice ("every weekday at 02:00" is `0 2 * * 1-5`). */
export function cronOfRhythm(r: MonitoringRhythm): string {
  return r.kind === 'custom' ? r.cron.trim() : `${r.minute} ${r.hour} * * ${rhythmDays[r.kind]}`;
}

/** The plain choice a cron expression is, when it is one of them; anything else is 'custom'. */
export function rhythmOfCron(cron: string): MonitoringRhythm {
  const m = /^(\d{1,2}) (\d{1,2}) \* \* (1-5|1)$/.exec(cron.trim().replace(/\s+/g, ' '));
  if (m && Number(m[1]) < 60 && Number(m[2]) < 24) return { kind: m[3] === '1-5' ? 'weekdays' : 'mondays', hour: Number(m[2]), minute: Number(m[1]) };
  return { kind: 'custom', cron };
}

export const createComparisonSchema = z.object({
  measureId: idSchema,
  waveId: idSchema,
  label: plainText().trim().min(3).max(200).optional(),
  unitOfAnalysis: z.enum(['student', 'classroom', 'school']).default('student'),
  primaryTest: z.enum(primaryTests).default('welch'),
  covariate: z.enum(['baseline', 'none']).default('baseline'),
  scheduleCron: scheduleCronSchema,
  /** The time zone the cron's hours are read in. */
  scheduleTimezone: timeZoneSchema.default('UTC'),
});
export type CreateComparison = z.infer<typeof createComparisonSchema>;

/** Sets, changes or (with a null cron) removes a comparison's automatic monitoring runs. */
export const comparisonScheduleSchema = z.object({
  scheduleCron: scheduleCronSchema,
  scheduleTimezone: timeZoneSchema.default('UTC'),
});
export type ComparisonSchedule = z.infer<typeof comparisonScheduleSchema>;

export const runKinds = ['monitoring', 'confirmatory'] as const;
export const runStates = ['queued', 'running', 'finished', 'failed', 'locked'] as const;

export const queueRunSchema = z.object({
  kind: z.enum(runKinds),
  /** Required when the comparison already has a locked run: why the data are analysed again. */
  reason: plainText().trim().max(4000).optional(),
});
export type QueueRun = z.infer<typeof queueRunSchema>;

/**
 * A confidence interval whose open end, under a one-sided test, is stored as null: the engine's ±Infinity
 * becomes null in JSON (and in the runs table's jsonb).
 */
const openInterval = z.tuple([z.number().nullable(), z.number().nullable()]);

const tTest = z.object({
  t: z.number(),
  df: z.number(),
  p: z.number(),
  meanDifference: z.number(),
  se: z.number(),
  ci: openInterval,
  confidence: z.number(),
  alternative: z.string(),
});

const quantiles = z.object({ min: z.number(), q1: z.number(), median: z.number(), q3: z.number(), max: z.number() });

export const armDescriptivesSchema = z.object({
  arm: armSchema,
  classrooms: z.number().int(),
  students: z.number().int(),
  mean: z.number(),
  sd: z.number(),
  se: z.number(),
  quantiles: quantiles.nullable(),
});

export const siteEstimateSchema = z.object({
  siteId: idSchema,
  siteName: z.string(),
  n1: z.number().int(),
  n2: z.number().int(),
  mean1: z.number(),
  mean2: z.number(),
  g: z.number(),
  se: z.number(),
  ci: z.tuple([z.number(), z.number()]),
  weight: z.number(),
});

const estimateWithInterval = z.object({
  /** Intervention minus comparison, in the measure's units (adjusted for the pretest and blocks when the model has them). */
  estimate: z.number(),
  se: z.number(),
  t: z.number(),
  df: z.number(),
  p: z.number(),
  ci: openInterval,
  confidence: z.number(),
  alternative: z.string(),
});
const unitsPerArm = z.object({ intervention: z.number().int(), comparison: z.number().int() });

/** The two-level model: students nested in the assigned units (random intercept), with the draw's blocks and the pretest. */
export const twoLevelResultSchema = estimateWithInterval.extend({
  unit: z.enum(['classroom', 'school']),
  units: unitsPerArm,
  students: z.number().int(),
  blocks: z.number().int(),
  covariate: z.enum(['baseline', 'none']),
  tau2: z.number(),
  sigma2: z.number(),
  icc: z.number(),
  remlLogLik: z.number(),
  /** τ² estimated at 0: the units varied no more than their students would by chance. */
  boundary: z.boolean(),
  /** Adjusted difference over the unadjusted pooled within-arm SD, with the small-sample correction. */
  g: z.number(),
});
export type TwoLevelResult = z.infer<typeof twoLevelResultSchema>;

/** The same regression by least squares with CR2 cluster-robust errors and small-sample df: a sensitivity check. */
export const clusterRobustResultSchema = estimateWithInterval.extend({ units: unitsPerArm, students: z.number().int() });

export const decidingAnalyses = ['two-level', 'welch', 'student', 'clustering-corrected', 'classroom-means', 'difference-in-proportions', 'linear-probability'] as const;
export type DecidingAnalysis = (typeof decidingAnalyses)[number];

/** How every screen, e-mail and export names the deciding analysis. */
export const decidingAnalysisNames: Record<DecidingAnalysis, string> = {
  'two-level': 'the two-level model (students within the assigned units, with random unit intercepts)',
  welch: 'Welch’s t test',
  student: 'Student’s pooled t test',
  'clustering-corrected': 'the t test over students with the clustering correction',
  'classroom-means': 'Welch’s t test on classroom averages',
  'difference-in-proportions': 'the two-proportion z test, with Newcombe’s interval for the difference in proportions',
  'linear-probability': 'the difference in proportions from a linear probability regression with CR2 cluster-robust errors',
};

/** One arm of a yes/no comparison: its counts and the proportion answering yes with its Wilson interval. */
const yesNoArmSchema = z.object({ arm: armSchema, yes: z.number().int(), no: z.number().int(), n: z.number().int(), proportion: z.number(), ci: z.tuple([z.number(), z.number()]) });

/**
 * A yes/no measure's comparison, from the counts per arm (summed in SQL per classroom). Proportions and differences
 * are fractions (0.42 = 42 %); the difference is intervention minus comparison.
 */
export const yesNoResultSchema = z.object({
  /** Whether yes is the good answer (the measure's direction). */
  yesIsGood: z.boolean(),
  confidence: z.number(),
  arms: z.array(yesNoArmSchema),
  /** Newcombe's hybrid score interval (two-sided at `confidence`). */
  difference: z.object({ estimate: z.number(), ci: z.tuple([z.number(), z.number()]) }),
  /** Woolf's interval; null when an arm answered all yes or all no (its odds are 0 or infinite: see `notComputed`). */
  oddsRatio: z.object({ estimate: z.number(), ci: z.tuple([z.number(), z.number()]) }).nullable(),
  /**
   * The evidence standard's effect size for yes/no outcomes, without the small-sample factor ω, and the improvement index
   * from it; null when an arm answered all yes or all no (a logit of 0 or 1 is infinite: see `notComputed`).
   */
  coxIndex: z.object({ value: z.number(), se: z.number(), improvementIndex: z.number(), substantivelyImportant: z.boolean() }).nullable(),
  /** Pooled two-proportion z test at the plan's sidedness; null when every student gave the same answer. */
  zTest: z.object({ z: z.number(), p: z.number() }).nullable(),
  chiSquare: z.object({ statistic: z.number(), p: z.number(), minExpected: z.number() }).nullable(),
  chiSquareYates: z.object({ statistic: z.number(), p: z.number() }).nullable(),
  fisher: z.object({ p: z.number() }),
  /** Cluster-assigned studies: the linear probability regression with CR2 errors (the deciding analysis). */
  linearProbability: clusterRobustResultSchema.nullable(),
  /** Cluster-assigned studies: the difference with its variance inflated by the design effect 1 + (m − 1)ρ, a sensitivity check. */
  designEffect: z
    .object({ se: z.number(), p: z.number(), ci: z.tuple([z.number(), z.number()]), designEffect: z.number(), icc: z.number(), iccSource: z.enum(['observed', 'default']), averageClusterSize: z.number() })
    .nullable(),
  /** Statistics these counts leave undefined, each with why (absent in runs made before it was recorded). */
  notComputed: z.array(z.object({ statistic: z.string(), why: z.string() })).optional(),
});
export type YesNoResult = z.infer<typeof yesNoResultSchema>;

/** The analysis whose p, interval and verdict every screen, e-mail and export shows. */
export const decidingSchema = z.object({
  analysis: z.enum(decidingAnalyses),
  /** In the measure's units; for a yes/no measure the difference in proportions (0.07 = 7 percentage points). */
  estimate: z.number(),
  p: z.number(),
  /** Infinite for a z test (stored as null). */
  df: z.number().nullable(),
  /** Null when the deciding analysis gives no interval (a clustering-corrected p of a run made before it gave one). */
  ci: openInterval.nullable(),
  confidence: z.number(),
  alternative: z.string(),
  significant: z.boolean(),
});
export type Deciding = z.infer<typeof decidingSchema>;

export const runResultsSchema = z
  .object({
    engineVersion: z.string(),
    planVersion: z.number().int().nullable(),
    /** `scale` is absent in runs made before yes/no measures (all scores). */
    measure: z.object({ id: idSchema, name: z.string(), kind: z.string(), higherIsBetter: z.boolean(), scale: z.enum(['score', 'yes-no']).optional() }),
    wave: z.object({ id: idSchema, name: z.string() }),
    alpha: z.number(),
    descriptives: z.array(armDescriptivesSchema),
    /** The registered primary test; for the two-level model, meanDifference is the model's adjusted estimate. */
    primary: tTest.extend({ test: z.enum(primaryTests), significant: z.boolean() }),
    /** Absent in runs made before the engine recorded it; read it through `decidingTest`. */
    deciding: decidingSchema.optional(),
    twoLevel: twoLevelResultSchema.nullable().optional(),
    /** A yes/no measure's counts, proportions, difference, odds ratio, Cox index and tests; absent for scores. */
    yesNo: yesNoResultSchema.nullable().optional(),
    effectSize: z.object({
      g: z.number(),
      ci: z.tuple([z.number(), z.number()]),
      se: z.number(),
      improvementIndex: z.number(),
      substantivelyImportant: z.boolean(),
    }),
    clustering: z
      .object({
        icc: z.number(),
        iccSource: z.enum(['observed', 'default', 'assumed']),
        tAdjusted: z.number(),
        df: z.number(),
        p: z.number(),
        significant: z.boolean(),
        averageClusterSize: z.number(),
        designEffect: z.number(),
        observedIcc: z.number().nullable(),
        /** The student-level interval widened by the same correction; absent in older runs. */
        ci: openInterval.optional(),
      })
      .nullable(),
    sensitivity: z.object({
      student: tTest,
      welch: tTest,
      mannWhitney: z.object({ u: z.number(), z: z.number(), p: z.number(), method: z.string() }).nullable(),
      ancova: z
        .object({ adjustedDifference: z.number(), se: z.number(), t: z.number(), df: z.number(), p: z.number(), ci: openInterval, g: z.number(), n: z.number().int() })
        .nullable(),
      classroomMeans: tTest.extend({ classrooms1: z.number().int(), classrooms2: z.number().int() }).nullable(),
      clusterRobust: clusterRobustResultSchema.nullable().optional(),
      /** Hedges' g over students, when the primary effect size is the two-level model's adjusted g. */
      studentLevelEffect: z.object({ g: z.number(), ci: z.tuple([z.number(), z.number()]), se: z.number() }).nullable().optional(),
      /** Checks that could not be computed for these data, with why. */
      notComputed: z.array(z.object({ check: z.string(), why: z.string() })).optional(),
    }),
    diagnostics: z.object({
      leveneMean: z.object({ statistic: z.number(), df1: z.number(), df2: z.number(), p: z.number() }).nullable(),
      leveneMedian: z.object({ statistic: z.number(), df1: z.number(), df2: z.number(), p: z.number() }).nullable(),
      /** Null when the denominator's arm has no spread (a yes/no arm that answered all yes or all no). */
      varianceRatio: z.object({ f: z.number(), df1: z.number(), df2: z.number(), p: z.number() }).nullable(),
      /** n: the values tested (a seeded sample of 5 000 in a larger arm); absent in runs made before it was recorded. */
      shapiroWilk: z.array(z.object({ arm: armSchema, w: z.number(), p: z.number(), n: z.number().int().optional() })).nullable(),
      notes: z.array(z.string()),
    }),
    sites: z.array(siteEstimateSchema),
    pooled: z
      .object({ estimate: z.number(), se: z.number(), ci: z.tuple([z.number(), z.number()]), p: z.number(), tau2: z.number(), q: z.number(), df: z.number(), pQ: z.number(), i2: z.number() })
      .nullable(),
    /** Who was analysed and who was lost, and why: what the run read (absent in runs made before it was stored). */
    accounting: accountingSchema.optional(),
    cautions: z.array(z.string()),
  })
  .meta({ id: 'RunResults' });
export type RunResults = z.infer<typeof runResultsSchema>;

export const runSchema = z
  .object({
    id: idSchema,
    comparisonId: idSchema,
    studyId: idSchema,
    kind: z.enum(runKinds),
    state: z.enum(runStates),
    reason: z.string().nullable(),
    planVersion: z.number().int().nullable(),
    engineVersion: z.string().nullable(),
    dataSha256: z.string().nullable(),
    results: runResultsSchema.nullable(),
    error: z.string().nullable(),
    queuedAt: z.iso.datetime({ offset: true }),
    finishedAt: z.iso.datetime({ offset: true }).nullable(),
    lockedAt: z.iso.datetime({ offset: true }).nullable(),
    /** The schedule's slot a monitoring run was made for; null when someone queued it. */
    scheduledFor: z.iso.datetime({ offset: true }).nullable(),
    /** Benjamini–Hochberg across the study's locked/finished confirmatory comparisons (null for monitoring). */
    multiplicity: z.object({ adjustedP: z.number(), rejected: z.boolean(), comparisons: z.number().int() }).nullable(),
  })
  .meta({ id: 'Run' });
export type Run = z.infer<typeof runSchema>;

export const comparisonSchema = z
  .object({
    id: idSchema,
    studyId: idSchema,
    measureId: idSchema,
    measureName: z.string(),
    waveId: idSchema,
    waveName: z.string(),
    label: z.string(),
    unitOfAnalysis: z.enum(['student', 'classroom', 'school']),
    primaryTest: z.enum(primaryTests),
    covariate: z.enum(['baseline', 'none']),
    prespecified: z.boolean(),
    isPrimary: z.boolean(),
    scheduleCron: z.string().nullable(),
    scheduleTimezone: z.string(),
    /** When the schedule's next monitoring run is due: null without a schedule, once the wave has closed, or after the lock. */
    nextMonitoringRunAt: z.iso.datetime({ offset: true }).nullable(),
    latestRun: runSchema.omit({ results: true }).nullable(),
    /** The newest run with results (finished or locked), for when the latest one failed or is still waiting. */
    latestFinishedRunId: idSchema.nullable(),
    lockedRunId: idSchema.nullable(),
  })
  .meta({ id: 'Comparison' });
export type Comparison = z.infer<typeof comparisonSchema>;

export interface DecidingTest extends Deciding {
  /** Which result decided: the registered two-level model or t test, or the clustering-corrected p of a t test over students. */
  basis: 'primary' | 'clustering';
}

/**
 * The deciding analysis of a run: the one whose p, interval and verdict every screen, e-mail and export shows. New
 * runs store it; for runs made before, it is derived as they decided then — the clustering-corrected p when clusters
 * were assigned but students compared (its interval only when the run recorded one), else the registered test.
 */
export function decidingTest(r: Pick<RunResults, 'primary' | 'clustering' | 'deciding'>): DecidingTest {
  const d: Deciding = r.deciding ?? derivedDeciding(r);
  return { ...d, basis: d.analysis === 'clustering-corrected' ? 'clustering' : 'primary' };
}

function derivedDeciding(r: Pick<RunResults, 'primary' | 'clustering'>): Deciding {
  const p = r.primary;
  const base = { estimate: p.meanDifference, confidence: p.confidence, alternative: p.alternative };
  if (r.clustering && p.test !== 'two-level') {
    return { ...base, analysis: 'clustering-corrected', p: r.clustering.p, df: r.clustering.df, ci: r.clustering.ci ?? null, significant: r.clustering.significant };
  }
  return { ...base, analysis: p.test, p: p.p, df: p.df, ci: p.ci, significant: p.significant };
}

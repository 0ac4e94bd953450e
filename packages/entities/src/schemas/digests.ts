import { z } from 'zod';
import { decidingAnalyses, runSchema } from './runs.js';
import { idSchema, paginationQuerySchema, plainText, timeZoneSchema } from './common.js';
import { armSchema, studyStatusSchema, unitOfAssignmentSchema, waveKindSchema } from './studies.js';

/** Figures based on fewer students than this are never shown to principals (NCES 2011-603: 10 is the most common minimum). */
export const MIN_REPORTED_STUDENTS = 10;
export const SUPPRESSED_WORDS = `fewer than ${MIN_REPORTED_STUDENTS} students`;

export const digestStates = ['queued', 'sent', 'retrying', 'undeliverable'] as const;
export const digestStateSchema = z.enum(digestStates);
export type DigestState = z.infer<typeof digestStateSchema>;

/** Why a digest was made: the weekly schedule, a confirmatory run being locked, or "Send now". */
export const digestKinds = ['weekly', 'lock', 'manual'] as const;
export const digestKindSchema = z.enum(digestKinds);
export type DigestKind = z.infer<typeof digestKindSchema>;

/** How often a principal wants digests: every week (and on lock), only when a result is locked, or never. */
export const digestFrequencies = ['weekly', 'locked', 'none'] as const;
export const digestFrequencySchema = z.enum(digestFrequencies);
export type DigestFrequency = z.infer<typeof digestFrequencySchema>;

/**
 * A count that may be hidden: `value` is null whenever `suppressed` is true, so a hidden number never
 * leaves the server.
 */
export const reportedCountSchema = z.object({ value: z.number().int().nullable(), suppressed: z.boolean() });
export type ReportedCount = z.infer<typeof reportedCountSchema>;

const armOrUnassigned = armSchema.nullable();

export const siteResultSchema = z.object({
  runId: idSchema,
  label: z.string(),
  measureName: z.string(),
  waveName: z.string(),
  isPrimary: z.boolean(),
  lockedAt: z.iso.datetime({ offset: true }),
  /**
   * The district-wide result, all sites together. For a yes/no measure g, estimate, interval and p are null while a yes
   * or no count of the district is hidden (with them and the students analysed one could solve for the counts).
   */
  district: z.object({
    g: z.number().nullable(),
    gCi: z.tuple([z.number(), z.number()]).nullable(),
    improvementIndex: z.number().nullable(),
    substantivelyImportant: z.boolean(),
    favours: z.enum(['intervention', 'comparison', 'neither']),
    /** The deciding analysis's estimate (intervention − comparison, in the measure's units; a fraction for yes/no), p and interval. */
    analysis: z.enum(decidingAnalyses),
    estimate: z.number().nullable(),
    p: z.number().nullable(),
    ci: z.tuple([z.number().nullable(), z.number().nullable()]).nullable(),
    confidence: z.number(),
    alpha: z.number(),
    alternative: z.string(),
    met: z.boolean(),
    students: reportedCountSchema,
    classrooms: z.number().int(),
  }),
  /**
   * A yes/no measure's district answers per arm, each count suppressed as students are (a hidden yes count hides the
   * arm's no count, which would give it away), the shares and the Cox index only while every count shows; null for a score.
   */
  yesNo: z
    .object({
      yesIsGood: z.boolean(),
      arms: z.array(z.object({ arm: armSchema, yes: reportedCountSchema, no: reportedCountSchema, proportion: z.number().nullable() })),
      coxIndex: z.object({ value: z.number(), improvementIndex: z.number() }).nullable(),
    })
    .nullable()
    .optional(),
  /** The same result in plain language, as the digest says it. */
  sentences: z.array(z.string()),
  /**
   * The final wording of the evidence verdict stored when the result was locked (the report's headline for it, with the
   * caution that it is a preview): no counts. Null only for a result locked before verdicts were stored and not yet read.
   */
  evidence: z.string().nullable(),
  /** The site's own descriptive figures for this measure and wave (a yes/no mean is the share answering yes); null when the site has no analysed students. */
  site: z
    .object({
      arms: z.array(z.object({ arm: armSchema, students: reportedCountSchema, mean: z.number().nullable() })),
      totalStudents: reportedCountSchema,
      note: z.string().nullable(),
    })
    .nullable(),
});
export type SiteResult = z.infer<typeof siteResultSchema>;

/** Everything a principal is told about their own school in one study: the digest and My school are built from this. */
export const siteFactsSchema = z
  .object({
    generatedAt: z.iso.datetime({ offset: true }),
    study: z.object({
      id: idSchema,
      title: z.string(),
      intervention: z.string(),
      comparisonCondition: z.string(),
      status: studyStatusSchema,
      unitOfAssignment: unitOfAssignmentSchema,
      quasiExperimental: z.boolean(),
    }),
    site: z.object({ id: idSchema, name: z.string() }),
    participation: z.object({
      /** One row per arm, and one for classrooms not yet assigned by the draw. */
      arms: z.array(z.object({ arm: armOrUnassigned, classrooms: z.number().int(), students: reportedCountSchema })),
      classrooms: z.number().int(),
      students: reportedCountSchema,
      note: z.string().nullable(),
    }),
    /** Score sheets per wave: classrooms × measures, and how many are in. */
    waves: z.array(
      z.object({
        id: idSchema,
        name: z.string(),
        kind: waveKindSchema,
        opensOn: z.string(),
        closesOn: z.string(),
        status: z.enum(['upcoming', 'open', 'closed']),
        sheets: z.number().int(),
        accepted: z.number().int(),
        submitted: z.number().int(),
        waiting: z.number().int(),
        percentAccepted: z.number(),
      }),
    ),
    /** Sheets of closed waves that are still not in. */
    late: z.array(z.object({ classroomName: z.string(), waveName: z.string(), measureName: z.string(), returned: z.boolean(), closedOn: z.string() })),
    /** Locked confirmatory results, the primary measure first. */
    results: z.array(siteResultSchema),
    cautions: z.array(z.string()),
  })
  .meta({ id: 'SiteFacts' });
export type SiteFacts = z.infer<typeof siteFactsSchema>;

export const mySchoolSchema = z
  .object({
    items: z.array(siteFactsSchema),
    total: z.number().int(),
    /** The signed-in principal's own digest setting, and the token their e-mail links carry. */
    digests: z.object({ frequency: digestFrequencySchema, preferencesToken: z.string() }),
  })
  .meta({ id: 'MySchool' });
export type MySchool = z.infer<typeof mySchoolSchema>;

export const digestSchema = z
  .object({
    id: idSchema,
    studyId: idSchema,
    siteId: idSchema,
    siteName: z.string(),
    recipient: z.object({ id: idSchema, name: z.string(), email: z.string() }),
    kind: digestKindSchema,
    subject: z.string(),
    state: digestStateSchema,
    attempts: z.number().int(),
    lastError: z.string().nullable(),
    createdAt: z.iso.datetime({ offset: true }),
    sentAt: z.iso.datetime({ offset: true }).nullable(),
    nextAttemptAt: z.iso.datetime({ offset: true }).nullable(),
  })
  .meta({ id: 'Digest' });
export type Digest = z.infer<typeof digestSchema>;

export const digestDetailSchema = digestSchema.extend({ html: z.string(), text: z.string() }).meta({ id: 'DigestDetail' });
export type DigestDetail = z.infer<typeof digestDetailSchema>;

export const digestsQuerySchema = paginationQuerySchema.extend({ state: digestStateSchema.optional() });
export type DigestsQuery = z.infer<typeof digestsQuerySchema>;

export const sendDigestsResultSchema = z.object({
  /** Digests put in the outbox, one per principal and school. */
  queued: z.number().int(),
  /** Principals who chose not to receive digests. */
  skipped: z.number().int(),
});
export type SendDigestsResult = z.infer<typeof sendDigestsResultSchema>;

/** ISO weekday numbers: 1 is Monday, 7 is Sunday. */
export const weekdayNames = ['Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday', 'Sunday'] as const;

/** When the weekly digest goes out while a wave is open; the hour is in the study's time zone. */
export const digestScheduleSchema = z
  .object({
    weeklyEnabled: z.boolean(),
    weekday: z.number({ message: 'Choose a day' }).int().min(1).max(7),
    hour: z.number({ message: 'Choose an hour' }).int().min(0).max(23),
    timezone: timeZoneSchema,
  })
  .meta({ id: 'DigestSchedule' });
export type DigestSchedule = z.infer<typeof digestScheduleSchema>;

export const defaultDigestSchedule: DigestSchedule = { weeklyEnabled: true, weekday: 1, hour: 7, timezone: 'UTC' };

export const digestPreferenceQuerySchema = z.object({ token: plainText().min(20).max(200) });

export const digestPreferenceSchema = z
  .object({ name: z.string(), frequency: digestFrequencySchema })
  .meta({ id: 'DigestPreference' });
export type DigestPreference = z.infer<typeof digestPreferenceSchema>;

export const updateDigestPreferenceSchema = z.object({ token: plainText().min(20).max(200), frequency: digestFrequencySchema });
export type UpdateDigestPreference = z.infer<typeof updateDigestPreferenceSchema>;

export const digestFrequencyLabels: Record<DigestFrequency, string> = {
  weekly: 'Every week while scores are collected, and when a result is locked',
  locked: 'Only when a result is locked',
  none: 'No digests',
};

/**
 * A principal's view of a locked run, built from an allow-list (apps/api/src/runs/principal-view.ts): the verdict,
 * the district's arms with small cells suppressed, and their own school's figures. While any arm's count is hidden,
 * every figure from which it or a mean could be worked out (estimate, interval, p, effect size) is null too.
 */
export const principalRunResultsSchema = z.object({
  measure: z.object({ name: z.string(), higherIsBetter: z.boolean() }),
  wave: z.object({ name: z.string() }),
  alpha: z.number(),
  deciding: z.object({
    analysis: z.enum(decidingAnalyses),
    significant: z.boolean(),
    confidence: z.number(),
    alternative: z.string(),
    estimate: z.number().nullable(),
    ci: z.tuple([z.number().nullable(), z.number().nullable()]).nullable(),
    p: z.number().nullable(),
  }),
  effectSize: z.object({ g: z.number(), ci: z.tuple([z.number(), z.number()]), improvementIndex: z.number() }).nullable(),
  arms: z.array(z.object({ arm: armSchema, students: reportedCountSchema, mean: z.number().nullable(), sd: z.number().nullable() })),
  /** The principal's own schools with both arms of at least MIN_REPORTED_STUDENTS students. */
  sites: z.array(z.object({ siteId: idSchema, siteName: z.string(), n1: z.number().int(), n2: z.number().int(), mean1: z.number(), mean2: z.number(), g: z.number(), ci: z.tuple([z.number(), z.number()]) })),
  /** A yes/no measure's answers per arm: each count suppressed as the students are, the proportion only when every count shows. */
  yesNo: z
    .object({
      yesIsGood: z.boolean(),
      arms: z.array(z.object({ arm: armSchema, yes: reportedCountSchema, no: reportedCountSchema, proportion: z.number().nullable() })),
      /** The Cox index and its improvement index: null while a count is hidden, or when an arm answered all yes or all no. */
      coxIndex: z.object({ value: z.number(), improvementIndex: z.number() }).nullable().optional(),
    })
    .nullable()
    .optional(),
  /** Whether anything was withheld because a cell had fewer than MIN_REPORTED_STUDENTS students. */
  suppressed: z.boolean(),
});
export type PrincipalRunResults = z.infer<typeof principalRunResultsSchema>;

export const principalRunSchema = runSchema
  .pick({ id: true, comparisonId: true, studyId: true, kind: true, state: true, planVersion: true, engineVersion: true, lockedAt: true })
  .extend({ results: principalRunResultsSchema.nullable(), multiplicity: z.object({ rejected: z.boolean() }).nullable() })
  .meta({ id: 'PrincipalRun' });
export type PrincipalRun = z.infer<typeof principalRunSchema>;

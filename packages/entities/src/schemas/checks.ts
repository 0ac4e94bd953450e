import { z } from 'zod';
import { idSchema } from './common.js';
import { accountingSchema } from './accounting.js';
import { armSchema } from './studies.js';

export const baselineBands = ['satisfies', 'requires-adjustment', 'fails'] as const;

const armBaselineSchema = z.object({ arm: armSchema, n: z.number().int(), mean: z.number(), sd: z.number() });

export const measureChecksSchema = z.object({
  measureId: idSchema,
  measureName: z.string(),
  range: z.tuple([z.number(), z.number()]),
  quality: z.array(
    z.object({
      waveId: idSchema,
      waveName: z.string(),
      sheets: z.number().int(),
      missing: z.number().int(),
      waiting: z.number().int(),
      returned: z.number().int(),
      accepted: z.number().int(),
      scores: z.number().int(),
      left: z.number().int(),
      outOfRange: z.number().int(),
    }),
  ),
  /** Quantiles per wave × arm (siteId null) and per wave × arm × site. */
  boxPlots: z.array(
    z.object({
      waveId: idSchema,
      arm: armSchema,
      siteId: idSchema.nullable(),
      siteName: z.string().nullable(),
      n: z.number().int(),
      min: z.number(),
      q1: z.number(),
      median: z.number(),
      q3: z.number(),
      max: z.number(),
    }),
  ),
  /**
   * Who was analysed and who was lost, and why, at the plan's outcome wave (`accountingOf` in the API): the locked
   * result's own accounting when the measure's pre-specified comparison is locked, else today's accepted sheets.
   */
  accounting: accountingSchema.nullable(),
  /** Where the accounting comes from: the locked run it was stored with, or null when it reflects the sheets today. */
  accountingRunId: idSchema.nullable(),
  baselineEquivalence: z
    .object({
      /** Hedges' g for a score; for a yes/no characteristic the Cox index (`effectSize` says which). */
      g: z.number(),
      ci: z.tuple([z.number(), z.number()]),
      /** Absent in answers made before yes/no measures: Hedges' g. */
      effectSize: z.enum(['hedges-g', 'cox-index']).optional(),
      band: z.enum(baselineBands),
      advice: z.string(),
      intervention: armBaselineSchema,
      comparison: armBaselineSchema,
      /** Whether the sealed plan adjusts for the baseline score. */
      adjustedInPlan: z.boolean(),
    })
    .nullable(),
  equivalenceRequired: z.boolean(),
});
export type MeasureChecks = z.infer<typeof measureChecksSchema>;

export const studyChecksSchema = z
  .object({
    studyId: idSchema,
    quasiExperimental: z.boolean(),
    outcomeWaveId: idSchema.nullable(),
    measures: z.array(measureChecksSchema),
  })
  .meta({ id: 'StudyChecks' });
export type StudyChecks = z.infer<typeof studyChecksSchema>;

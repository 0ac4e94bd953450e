import { z } from 'zod';
import { idSchema } from './common.js';
import { armSchema } from './studies.js';

export const attritionBoundarySchema = z.object({
  boundary: z.enum(['cautious', 'optimistic']),
  /** Highest differential (percentage points) still counted as low attrition at this overall rate; null when none is. */
  maxDifferential: z.number().nullable(),
  band: z.enum(['low', 'high']),
  /** True when the boundary lies between two rows the handbook lists, and was interpolated between them. */
  interpolated: z.boolean(),
  bracketingRows: z.tuple([z.number(), z.number()]).nullable(),
  basis: z.enum(['listed-row', 'interpolated', 'always-high']),
});
export type AttritionBoundaryCheck = z.infer<typeof attritionBoundarySchema>;

export const attritionCheckSchema = z.object({
  /** % of the randomised sample without outcome data. */
  overall: z.number(),
  /** |attrition₁ − attrition₂| in percentage points. */
  differential: z.number(),
  attrition1: z.number(),
  attrition2: z.number(),
  cautious: attritionBoundarySchema,
  optimistic: attritionBoundarySchema,
});
export type AttritionCheck = z.infer<typeof attritionCheckSchema>;

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
  attrition: z.object({
    students: attritionCheckSchema.nullable(),
    classrooms: attritionCheckSchema.nullable(),
    counts: z.array(
      z.object({ arm: armSchema, randomized: z.number().int(), analyzed: z.number().int(), classrooms: z.number().int(), classrooms_analyzed: z.number().int() }),
    ),
  }),
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

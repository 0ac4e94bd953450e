import { z } from 'zod';
import { idSchema, paginationQuerySchema, plainText } from './common.js';

export const studyStatuses = ['drafting', 'registered', 'enrolling', 'collecting', 'analysing', 'reported', 'archived'] as const;
export const studyStatusSchema = z.enum(studyStatuses);
export type StudyStatus = z.infer<typeof studyStatusSchema>;

export const unitsOfAssignment = ['student', 'classroom', 'school'] as const;
export const unitOfAssignmentSchema = z.enum(unitsOfAssignment);
export type UnitOfAssignment = z.infer<typeof unitOfAssignmentSchema>;

export const arms = ['intervention', 'comparison'] as const;
export const armSchema = z.enum(arms);
export type Arm = z.infer<typeof armSchema>;

const text = (label: string, max: number) => plainText().trim().min(1, `Enter ${label}`).max(max);

export const createStudySchema = z.object({
  title: text('a title', 160),
  intervention: text('the intervention', 2000),
  comparisonCondition: text('the comparison condition', 2000),
  unitOfAssignment: unitOfAssignmentSchema.default('classroom'),
});
export type CreateStudy = z.infer<typeof createStudySchema>;

export const updateStudySchema = z
  .object({
    title: text('a title', 160).optional(),
    intervention: text('the intervention', 2000).optional(),
    comparisonCondition: text('the comparison condition', 2000).optional(),
    unitOfAssignment: unitOfAssignmentSchema.optional(),
    archived: z.boolean().optional(),
  })
  .refine((v) => Object.keys(v).length > 0, 'Change at least one field');
export type UpdateStudy = z.infer<typeof updateStudySchema>;

export const studySchema = z
  .object({
    id: idSchema,
    title: z.string(),
    intervention: z.string(),
    comparisonCondition: z.string(),
    unitOfAssignment: unitOfAssignmentSchema,
    status: studyStatusSchema,
    /** True once a manual reassignment broke the random draw: results must say so. */
    quasiExperimental: z.boolean(),
    planVersion: z.number().int().nullable(),
    sealedAt: z.iso.datetime({ offset: true }).nullable(),
    /** When the draw was committed; null before. */
    drawCommittedAt: z.iso.datetime({ offset: true }).nullable(),
    counts: z.object({ sites: z.number().int(), classrooms: z.number().int(), measures: z.number().int(), waves: z.number().int() }),
    createdAt: z.iso.datetime({ offset: true }),
  })
  .meta({ id: 'Study' });
export type Study = z.infer<typeof studySchema>;

export const studiesQuerySchema = paginationQuerySchema.extend({ status: studyStatusSchema.optional() });

export const studyParamsSchema = z.object({ id: idSchema });

// Measures and waves

export const measureKinds = ['achievement', 'behaviour'] as const;
export const measureKindSchema = z.enum(measureKinds);
export type MeasureKind = z.infer<typeof measureKindSchema>;

/** A score (a range and which way is better) or yes/no (which answer is the good one). */
export const measureScales = ['score', 'yes-no'] as const;
export const measureScaleSchema = z.enum(measureScales);
export type MeasureScale = z.infer<typeof measureScaleSchema>;

/**
 * A score measure gives its range; a yes/no measure is stored as 1 (yes) and 0 (no) in the score column, so its
 * range is 0–1 and `higherIsBetter` says whether yes is the good answer.
 */
export const createMeasureSchema = z
  .object({
    name: text('a name', 120),
    scale: measureScaleSchema.default('score'),
    minScore: z.number({ message: 'Enter a number' }).finite().optional(),
    maxScore: z.number({ message: 'Enter a number' }).finite().optional(),
    higherIsBetter: z.boolean().default(true),
    kind: measureKindSchema.default('achievement'),
  })
  .superRefine((m, ctx) => {
    if (m.scale === 'yes-no') {
      if ((m.minScore !== undefined && m.minScore !== 0) || (m.maxScore !== undefined && m.maxScore !== 1)) {
        ctx.addIssue({ code: 'custom', path: ['scale'], message: 'A yes/no measure has no score range (yes is stored as 1, no as 0)' });
      }
      return;
    }
    if (m.minScore === undefined) ctx.addIssue({ code: 'custom', path: ['minScore'], message: 'Enter the lowest score' });
    if (m.maxScore === undefined) ctx.addIssue({ code: 'custom', path: ['maxScore'], message: 'Enter the highest score' });
    if (m.minScore !== undefined && m.maxScore !== undefined && !(m.maxScore > m.minScore)) {
      ctx.addIssue({ code: 'custom', path: ['maxScore'], message: 'The highest score must be above the lowest' });
    }
  })
  .transform((m) => ({ ...m, minScore: m.scale === 'yes-no' ? 0 : m.minScore!, maxScore: m.scale === 'yes-no' ? 1 : m.maxScore! }));
export type CreateMeasure = z.infer<typeof createMeasureSchema>;
export type CreateMeasureInput = z.input<typeof createMeasureSchema>;

export const measureSchema = z
  .object({
    id: idSchema,
    studyId: idSchema,
    name: z.string(),
    scale: measureScaleSchema,
    minScore: z.number(),
    maxScore: z.number(),
    /** For a yes/no measure: yes is the good answer. */
    higherIsBetter: z.boolean(),
    kind: measureKindSchema,
  })
  .meta({ id: 'Measure' });
export type Measure = z.infer<typeof measureSchema>;

export const waveKinds = ['baseline', 'outcome', 'follow-up'] as const;
export const waveKindSchema = z.enum(waveKinds);
export type WaveKind = z.infer<typeof waveKindSchema>;

const dateSchema = z.iso.date({ message: 'Enter a date (YYYY-MM-DD)' });

export const createWaveSchema = z
  .object({
    kind: waveKindSchema,
    name: text('a name', 120),
    opensOn: dateSchema,
    closesOn: dateSchema,
  })
  .refine((w) => w.closesOn >= w.opensOn, { path: ['closesOn'], message: 'A wave cannot close before it opens' });
export type CreateWave = z.infer<typeof createWaveSchema>;

export const waveSchema = z
  .object({ id: idSchema, studyId: idSchema, kind: waveKindSchema, name: z.string(), opensOn: z.string(), closesOn: z.string() })
  .meta({ id: 'Wave' });
export type Wave = z.infer<typeof waveSchema>;

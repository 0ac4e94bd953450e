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
  /** % of the randomised sample not analysed. */
  overall: z.number(),
  /** |attrition₁ − attrition₂| in percentage points. */
  differential: z.number(),
  attrition1: z.number(),
  attrition2: z.number(),
  cautious: attritionBoundarySchema,
  optimistic: attritionBoundarySchema,
});
export type AttritionCheck = z.infer<typeof attritionCheckSchema>;

/**
 * Why a randomised student or classroom was not analysed, one reason each. The first four are about the classroom's
 * outcome sheet when the analysis did not read it (every student of the classroom shares it); the last three about a
 * student of a classroom whose sheet was read. A classroom whose sheet was read but none of whose students were
 * analysed takes the reason most of its students have.
 */
export const lossReasons = ['sheet-not-entered', 'sheet-not-submitted', 'awaiting-review', 'returned', 'left-study', 'no-outcome-score', 'no-pretest'] as const;
export const lossReasonSchema = z.enum(lossReasons);
export type LossReason = z.infer<typeof lossReasonSchema>;

/** The words every screen, export and the bundle use for each reason. */
export const lossReasonWords: Record<LossReason, string> = {
  'sheet-not-entered': 'outcome sheet never entered',
  'sheet-not-submitted': 'outcome sheet entered but not submitted',
  'awaiting-review': 'outcome sheet submitted, awaiting review',
  returned: 'outcome sheet returned to the teacher',
  'left-study': 'marked as having left the study',
  'no-outcome-score': 'no outcome score on their classroom’s sheet',
  'no-pretest': 'no pretest score, which the analysis adjusts for',
};

const unitAccountSchema = z.object({
  randomised: z.number().int(),
  analysed: z.number().int(),
  /** The ones not analysed, by reason (reasons with none left out), in the order of `lossReasons`; they sum to randomised − analysed. */
  lost: z.array(z.object({ reason: lossReasonSchema, n: z.number().int() })),
});
export type UnitAccount = z.infer<typeof unitAccountSchema>;

/**
 * Who was randomised, who was analysed and why the others were not, per arm, in classrooms and students, with the
 * attrition that follows from those counts. Randomised: the classrooms the draw gave an arm and the student codes
 * registered to them; analysed: students with an outcome score on a sheet the analysis reads (accepted; a monitoring
 * run also reads sheets awaiting review) and, when the deciding analysis adjusts for it, a pretest score; a classroom
 * is analysed when one of its students is.
 */
export const accountingSchema = z.object({
  /** The sheet states read: accepted, and for a monitoring run also submitted. */
  reads: z.array(z.enum(['accepted', 'submitted'])),
  /** Whether a student also needs a pretest score to be analysed (the two-level model adjusting for the baseline). */
  needsPretest: z.boolean(),
  arms: z.array(z.object({ arm: armSchema, classrooms: unitAccountSchema, students: unitAccountSchema })),
  attrition: z.object({ students: attritionCheckSchema.nullable(), classrooms: attritionCheckSchema.nullable() }),
  /** Each classroom not analysed, with its reason and its randomised students, in byte order of classroom ID. */
  lostClassrooms: z.array(z.object({ classroomId: idSchema, arm: armSchema, reason: lossReasonSchema, students: z.number().int() })),
});
export type Accounting = z.infer<typeof accountingSchema>;

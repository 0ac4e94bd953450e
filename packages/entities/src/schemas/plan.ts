import { z } from 'zod';
import { idSchema, plainText } from './common.js';
import { attritionBoundaries } from './evidence.js';
import { unitOfAssignmentSchema } from './studies.js';

export const alternatives = ['two-sided', 'greater', 'less'] as const;
/** The registered primary test: Welch's or Student's t over students, or the two-level model for cluster-assigned studies. */
export const primaryTests = ['welch', 'student', 'two-level'] as const;
export type PrimaryTest = (typeof primaryTests)[number];

/** What a new plan registers unless the research lead chooses otherwise: the analysis that matches the assignment. */
export const defaultPrimaryTest = (unitOfAssignment: 'student' | 'classroom' | 'school'): PrimaryTest => (unitOfAssignment === 'student' ? 'welch' : 'two-level');

/**
 * The pre-registration. Sealing freezes it; after that it changes only by amendment.
 * Defaults follow common practice: alpha .05, two-sided, Welch's t.
 */
export const planContentSchema = z
  .object({
    primaryMeasureId: idSchema,
    primaryWaveId: idSchema,
    hypothesis: plainText().trim().min(10, 'State the hypothesis in a sentence or more').max(4000),
    alpha: z.number().gt(0).max(0.2, 'Alpha above .20 is not a test anyone will accept').default(0.05),
    alternative: z.enum(alternatives).default('two-sided'),
    /** Required when the test is one-sided. */
    alternativeJustification: plainText().trim().max(4000).default(''),
    primaryTest: z.enum(primaryTests).default('welch'),
    /** Required when Student's pooled test is chosen over Welch's. */
    primaryTestReason: plainText().trim().max(4000).default(''),
    covariate: z.enum(['baseline', 'none']).default('baseline'),
    unitOfAnalysis: unitOfAssignmentSchema.default('student'),
    /** Where the ICC for the clustering correction comes from. */
    iccSource: z.enum(['observed', 'default', 'assumed']).default('default'),
    /** The ICC to assume when iccSource is 'assumed'. */
    icc: z.number().min(0).max(0.99).nullable().default(null),
    smallestEffectOfInterest: z.number().gt(0).max(3).default(0.25),
    plannedSites: z.number().int().min(1).max(1000),
    plannedClassrooms: z.number().int().min(2).max(100_000),
    plannedStudentsPerClassroom: z.number().int().min(1).max(1000),
    /** Share of units assigned to the intervention. */
    shareIntervention: z.number().gt(0).lt(1).default(0.5),
    /** Whether classrooms may report only n, mean and SD instead of per-student scores. */
    summaryEntryAllowed: z.boolean().default(false),
    /** Expected R² of the baseline covariate (student level), for the power calculation. */
    covariateR2: z.number().min(0).lt(1).default(0),
    /**
     * The attrition boundary the evidence verdict judges by, registered as a review protocol chooses it: cautious when
     * the intervention could affect which students leave; optimistic only with a reason. Plans sealed before it existed
     * mean cautious (`planBoundary`).
     */
    attritionBoundary: z.enum(attritionBoundaries).default('cautious'),
    /** Required when the optimistic boundary is chosen. */
    attritionBoundaryReason: plainText().trim().max(4000).default(''),
  })
  .superRefine((p, ctx) => {
    if (p.alternative !== 'two-sided' && p.alternativeJustification.length < 10) {
      ctx.addIssue({ code: 'custom', path: ['alternativeJustification'], message: 'A one-sided test needs a written justification' });
    }
    if (p.primaryTest === 'student' && p.primaryTestReason.length < 10) {
      ctx.addIssue({ code: 'custom', path: ['primaryTestReason'], message: "Say why Student's pooled test is preferred over Welch's" });
    }
    if (p.attritionBoundary === 'optimistic' && p.attritionBoundaryReason.length < 10) {
      ctx.addIssue({ code: 'custom', path: ['attritionBoundaryReason'], message: 'Say why the intervention is unlikely to affect which students leave' });
    }
    if (p.iccSource === 'assumed' && p.icc === null) {
      ctx.addIssue({ code: 'custom', path: ['icc'], message: 'Enter the ICC to assume' });
    }
  });
export type PlanContent = z.infer<typeof planContentSchema>;
export type PlanContentInput = z.input<typeof planContentSchema>;

/** The boundary a plan registers, with the reason; a plan sealed before the choice existed registers the cautious one. */
export function planBoundary(plan: Partial<Pick<PlanContent, 'attritionBoundary' | 'attritionBoundaryReason'>> | null | undefined): {
  boundary: (typeof attritionBoundaries)[number];
  reason: string;
} {
  const boundary = plan?.attritionBoundary ?? 'cautious';
  return { boundary, reason: boundary === 'optimistic' ? (plan?.attritionBoundaryReason ?? '') : '' };
}

export const amendmentSchema = z.object({
  reason: plainText().trim().min(10, 'Explain the amendment in a sentence or more').max(4000),
  plan: planContentSchema,
});
export type Amendment = z.infer<typeof amendmentSchema>;

export const planFieldChangeSchema = z.object({ field: z.string(), from: z.unknown(), to: z.unknown() });
export type PlanFieldChange = z.infer<typeof planFieldChangeSchema>;

export const planVersionSchema = z
  .object({
    version: z.number().int().min(1),
    content: planContentSchema,
    sha256: z.string().length(64),
    createdAt: z.iso.datetime({ offset: true }),
    createdBy: z.object({ id: idSchema, name: z.string() }),
    /** Null for the sealed original; the amendment's reason otherwise. */
    reason: z.string().nullable(),
    changes: z.array(planFieldChangeSchema),
  })
  .meta({ id: 'PlanVersion' });
export type PlanVersion = z.infer<typeof planVersionSchema>;

export const planSchema = z
  .object({
    studyId: idSchema,
    sealed: z.boolean(),
    /** The editable draft before sealing (null once sealed, and for reviewers). */
    draft: planContentSchema.nullable(),
    versions: z.array(planVersionSchema),
  })
  .meta({ id: 'Plan' });
export type Plan = z.infer<typeof planSchema>;

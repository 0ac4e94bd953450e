import { z } from 'zod';
import { idSchema } from './common.js';

export const evidenceRatings = ['without-reservations', 'with-reservations', 'does-not-meet', 'cannot-tell'] as const;
export const evidenceTiers = ['strong', 'moderate', 'promising', 'none'] as const;
export const attritionBoundaries = ['cautious', 'optimistic'] as const;

/** One rule of the verdict: what it asks, where it comes from, the numbers it was judged on, and the screen that shows them. */
export const evidenceReasonSchema = z.object({
  id: z.string(),
  rule: z.string(),
  citation: z.string(),
  numbers: z.string(),
  /** null: cannot be judged yet. */
  passed: z.boolean().nullable(),
  consequence: z.string(),
  seeOn: z.enum(['checks', 'result', 'plan', 'draw']),
});
export type EvidenceReasonAnswer = z.infer<typeof evidenceReasonSchema>;

export const verdictSchema = z
  .object({
    rating: z.enum(evidenceRatings),
    tier: z.enum(evidenceTiers),
    settled: z.boolean(),
    reasons: z.array(evidenceReasonSchema),
    reviewerChecks: z.array(z.string()),
    /** The final wording, with the caution that it is a preview and the reviewers decide. */
    wording: z.string(),
  })
  .meta({ id: 'EvidenceVerdict' });
export type VerdictAnswer = z.infer<typeof verdictSchema>;

/** What currently puts a comparison's rating at risk, with the numbers that would change it. */
export const evidenceRiskSchema = z.object({ text: z.string(), seeOn: z.enum(['checks', 'result', 'plan', 'draw']) });

export const comparisonEvidenceSchema = z.object({
  comparisonId: idSchema,
  label: z.string(),
  measureName: z.string(),
  /** The run the verdict read: the locked one, else the latest finished confirmatory one; null before any. */
  runId: idSchema.nullable(),
  locked: z.boolean(),
  verdict: verdictSchema,
  risks: z.array(evidenceRiskSchema),
});
export type ComparisonEvidence = z.infer<typeof comparisonEvidenceSchema>;

export const studyEvidenceSchema = z
  .object({
    studyId: idSchema,
    boundary: z.enum(attritionBoundaries),
    comparisons: z.array(comparisonEvidenceSchema),
  })
  .meta({ id: 'StudyEvidence' });
export type StudyEvidence = z.infer<typeof studyEvidenceSchema>;

export const studyEvidenceQuerySchema = z.object({
  /** The attrition boundary the research lead judges the study by: cautious when the intervention could affect who leaves. */
  boundary: z.enum(attritionBoundaries).default('cautious'),
});

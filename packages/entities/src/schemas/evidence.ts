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

/** Which attrition boundary a verdict is judged against, and why: the one the plan registers, or the other one asked for. */
export const boundaryChoiceSchema = z.object({
  boundary: z.enum(attritionBoundaries),
  /** 'plan': the plan registers it (or it is the default before a plan chooses); 'reader': asked for, the plan registers the other. */
  chosenBy: z.enum(['plan', 'reader']),
  /** The sealed plan version that registers the boundary; null before sealing. */
  planVersion: z.number().int().nullable(),
  /** The plan's reason for the optimistic boundary; empty for the cautious one. */
  reason: z.string(),
  /** One sentence for screens and exports: which boundary applies and why. */
  explanation: z.string(),
});
export type BoundaryChoice = z.infer<typeof boundaryChoiceSchema>;

export const comparisonEvidenceSchema = z.object({
  comparisonId: idSchema,
  label: z.string(),
  measureName: z.string(),
  /** The run the verdict read: the locked one, else the latest finished confirmatory one; null before any. */
  runId: idSchema.nullable(),
  locked: z.boolean(),
  /** A locked result's verdict is the one stored when it was locked, judged against its plan's boundary unless asked otherwise. */
  boundary: boundaryChoiceSchema,
  verdict: verdictSchema,
  risks: z.array(evidenceRiskSchema),
});
export type ComparisonEvidence = z.infer<typeof comparisonEvidenceSchema>;

export const studyEvidenceSchema = z
  .object({
    studyId: idSchema,
    /** The boundary asked for, else the plan's. */
    boundary: z.enum(attritionBoundaries),
    /** The boundary the plan registers (the current sealed version, else the draft, else cautious) and why. */
    plan: boundaryChoiceSchema,
    comparisons: z.array(comparisonEvidenceSchema),
  })
  .meta({ id: 'StudyEvidence' });
export type StudyEvidence = z.infer<typeof studyEvidenceSchema>;

export const studyEvidenceQuerySchema = z.object({
  /** Judge against this boundary instead of the one the plan registers (what-if; a locked result's stored verdicts cover both). */
  boundary: z.enum(attritionBoundaries).optional(),
});

import { z } from 'zod';
import { idSchema, plainText } from './common.js';
import { armSchema } from './studies.js';

export const drawRequestSchema = z.object({
  /** Leave empty for a seed from a cryptographically random source. */
  seed: plainText().trim().min(1).max(200).optional(),
  /** False previews the assignment without storing it. */
  commit: z.boolean().default(false),
});
export type DrawRequest = z.infer<typeof drawRequestSchema>;

export const drawAssignmentSchema = z.object({ blockId: z.string(), unitId: idSchema, unitName: z.string(), arm: armSchema });

export const balanceRowSchema = z.object({
  siteId: idSchema,
  siteName: z.string(),
  intervention: z.object({ units: z.number().int(), expectedStudents: z.number().int() }),
  comparison: z.object({ units: z.number().int(), expectedStudents: z.number().int() }),
});
export type BalanceRow = z.infer<typeof balanceRowSchema>;

export const reassignmentSchema = z.object({
  classroomId: idSchema,
  arm: armSchema,
  reason: plainText().trim().min(10, 'Explain the reassignment in a sentence or more').max(4000),
});
export type Reassignment = z.infer<typeof reassignmentSchema>;

export const reassignmentRecordSchema = reassignmentSchema.extend({
  id: idSchema,
  fromArm: armSchema,
  by: z.object({ id: idSchema, name: z.string() }),
  at: z.iso.datetime({ offset: true }),
});

export const drawSchema = z
  .object({
    id: idSchema.nullable(),
    studyId: idSchema,
    committed: z.boolean(),
    seed: z.string(),
    algorithm: z.string(),
    algorithmVersion: z.string(),
    unit: z.enum(['classroom', 'school']),
    blocks: z.array(z.object({ blockId: z.string(), unitIds: z.array(idSchema) })),
    assignments: z.array(drawAssignmentSchema),
    balance: z.array(balanceRowSchema),
    committedAt: z.iso.datetime({ offset: true }).nullable(),
    committedBy: z.object({ id: idSchema, name: z.string() }).nullable(),
    /** Re-derived from the seed now: true when the stored result is exactly what the seed gives. */
    verified: z.boolean(),
    reassignments: z.array(reassignmentRecordSchema),
  })
  .meta({ id: 'Draw' });
export type Draw = z.infer<typeof drawSchema>;

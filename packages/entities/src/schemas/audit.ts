import { z } from 'zod';
import { idSchema, paginationQuerySchema } from './common.js';

export const auditEventSchema = z
  .object({
    id: idSchema,
    at: z.iso.datetime({ offset: true }),
    actor: z.object({ id: idSchema, email: z.string() }).nullable(),
    action: z.string(),
    entityType: z.string(),
    entityId: z.string().nullable(),
    studyId: idSchema.nullable(),
    before: z.unknown().nullable(),
    after: z.unknown().nullable(),
  })
  .meta({ id: 'AuditEvent' });
export type AuditEvent = z.infer<typeof auditEventSchema>;

export const auditQuerySchema = paginationQuerySchema.extend({ studyId: idSchema.optional() });
export type AuditQuery = z.infer<typeof auditQuerySchema>;

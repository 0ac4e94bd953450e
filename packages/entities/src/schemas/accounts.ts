import { z } from 'zod';
import { idSchema, paginationQuerySchema, plainText } from './common.js';
import { emailSchema } from './auth.js';
import { roleGrantSchema, roleSchema, siteScopedRoles } from './roles.js';

const grantsSchema = z
  .array(roleGrantSchema)
  .min(1, 'Give at least one role')
  .max(20)
  .superRefine((grants, ctx) => {
    const seen = new Set<string>();
    grants.forEach((g, i) => {
      if (siteScopedRoles.includes(g.role) && !g.siteId) {
        ctx.addIssue({ code: 'custom', path: [i, 'siteId'], message: `A ${g.role} grant needs a site` });
      }
      const key = `${g.role}:${g.siteId ?? ''}`;
      if (seen.has(key)) ctx.addIssue({ code: 'custom', path: [i, 'role'], message: 'This grant is listed twice' });
      seen.add(key);
    });
  });

export const accountSchema = z
  .object({
    id: idSchema,
    email: z.string(),
    name: z.string(),
    active: z.boolean(),
    invitationPending: z.boolean(),
    roles: z.array(roleGrantSchema),
    createdAt: z.iso.datetime({ offset: true }),
    lastSignInAt: z.iso.datetime({ offset: true }).nullable(),
  })
  .meta({ id: 'Account' });
export type Account = z.infer<typeof accountSchema>;

export const inviteAccountSchema = z.object({
  email: emailSchema,
  name: plainText().trim().min(1, 'Enter a name').max(120),
  roles: grantsSchema,
});
export type InviteAccount = z.infer<typeof inviteAccountSchema>;

export const updateAccountSchema = z
  .object({
    name: plainText().trim().min(1).max(120).optional(),
    active: z.boolean().optional(),
    roles: grantsSchema.optional(),
  })
  .refine((v) => Object.keys(v).length > 0, 'Change at least one field');
export type UpdateAccount = z.infer<typeof updateAccountSchema>;

export const accountsQuerySchema = paginationQuerySchema.extend({
  q: plainText().trim().max(100).optional(),
  role: roleSchema.optional(),
  sort: z.enum(['name', 'email', 'createdAt', 'lastSignInAt']).default('name'),
  order: z.enum(['asc', 'desc']).default('asc'),
});
export type AccountsQuery = z.infer<typeof accountsQuerySchema>;

import { z } from 'zod';
import { idSchema } from './common.js';

export const roles = ['admin', 'coordinator', 'teacher', 'research_lead', 'principal', 'reviewer'] as const;
export const roleSchema = z.enum(roles);
export type Role = z.infer<typeof roleSchema>;

/** Roles whose grant belongs to one school: the grant names the site. */
export const siteScopedRoles: readonly Role[] = ['teacher', 'principal'];

export const roleLabels: Record<Role, string> = {
  admin: 'District admin',
  coordinator: 'Coordinator',
  teacher: 'Teacher',
  research_lead: 'Research lead',
  principal: 'Principal',
  reviewer: 'Reviewer',
};

export const roleGrantSchema = z
  .object({
    role: roleSchema,
    siteId: idSchema.nullable().default(null),
  })
  .meta({ id: 'RoleGrant' });
export type RoleGrant = z.infer<typeof roleGrantSchema>;

import { z } from 'zod';
import { idSchema } from './common.js';

export const roles = ['admin', 'coordinator', 'teacher', 'research_lead', 'principal', 'reviewer'] as const;
export const roleSchema = z.enum(roles);
export type Role = z.infer<typeof roleSchema>;

/** Roles whose grant belongs to one school: the grant names the site. */
export const siteScopedRoles: readonly Role[] = ['teacher', 'principal'];

// Role groups: the one definition that route access, the services' scope checks and the web navigation share.

/** District-wide staff: they see every study and site of the district; teachers and principals only their own. */
export const districtWideRoles = ['admin', 'coordinator', 'research_lead', 'reviewer'] as const satisfies readonly Role[];

/** Who reads a whole study (its plan, sites and classes, draw); the admin's work is accounts, so not the admin. */
export const studyReaderRoles = ['coordinator', 'research_lead', 'reviewer'] as const satisfies readonly Role[];

/** Who writes a study: starts it, enrols its schools and classes, keeps its score sheets. */
export const studyWriterRoles = ['coordinator', 'research_lead'] as const satisfies readonly Role[];

/**
 * Who sees every figure of a result, cells under `MIN_REPORTED_STUDENTS` students included. A principal sees
 * their own school's result with small cells suppressed (`suppressCounts`).
 */
export const smallCellViewerRoles = ['coordinator', 'research_lead', 'reviewer'] as const satisfies readonly Role[];

/**
 * Who may see student-level values (a score by student code): the readers of score sheets — a teacher their own
 * classrooms', the study's writers all. Others (the admin, reviewers) see that such a change happened, not its values.
 */
export const studentValueViewerRoles = ['teacher', ...studyWriterRoles] as const satisfies readonly Role[];

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

/** Accepting a school role one was named for: the token from the e-mailed link. */
export const acceptRoleInvitationSchema = z.object({ token: z.string().min(20).max(200) });
export type AcceptRoleInvitation = z.infer<typeof acceptRoleInvitationSchema>;

export const acceptedRoleSchema = z
  .object({ role: z.enum(['teacher', 'principal']), siteId: idSchema, siteName: z.string() })
  .meta({ id: 'AcceptedRole' });
export type AcceptedRole = z.infer<typeof acceptedRoleSchema>;

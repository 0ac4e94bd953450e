import { z } from 'zod';
import { idSchema, plainText } from './common.js';
import { emailSchema } from './auth.js';

export const siteCodeSchema = z
  .string()
  .trim()
  .toUpperCase()
  .regex(/^[A-Z0-9-]{2,20}$/, 'Use 2–20 letters, digits or dashes');

export const siteSchema = z
  .object({
    id: idSchema,
    name: z.string(),
    code: z.string(),
    principal: z.object({ id: idSchema, name: z.string(), email: z.string(), invitationPending: z.boolean() }).nullable(),
  })
  .meta({ id: 'Site' });
export type Site = z.infer<typeof siteSchema>;

const principalSchema = z.object({
  email: emailSchema,
  name: plainText().trim().min(1, 'Enter the principal’s name').max(120),
});

/** Enrol a school in a study: an existing district site by id, or a new one by name and code. */
export const enrolSiteSchema = z.union([
  z.object({ siteId: idSchema, principal: principalSchema.optional() }),
  z.object({
    name: plainText().trim().min(1, 'Enter the school’s name').max(160),
    code: siteCodeSchema,
    principal: principalSchema.optional(),
  }),
]);
export type EnrolSite = z.infer<typeof enrolSiteSchema>;

export const updateSiteSchema = z
  .object({
    name: plainText().trim().min(1).max(160).optional(),
    code: siteCodeSchema.optional(),
    principal: principalSchema.optional(),
  })
  .refine((v) => Object.keys(v).length > 0, 'Change at least one field');
export type UpdateSite = z.infer<typeof updateSiteSchema>;

export const studySiteSchema = siteSchema
  .extend({ classrooms: z.number().int(), expectedStudents: z.number().int() })
  .meta({ id: 'StudySite' });
export type StudySite = z.infer<typeof studySiteSchema>;

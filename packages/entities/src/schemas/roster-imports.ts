import { z } from 'zod';
import { emailSchema } from './auth.js';
import { idSchema, plainText } from './common.js';

/** A person the export names for a school or a class (teachers and principals only; students have no names here). */
const rosterPersonSchema = z.object({ name: z.string(), email: z.string() });

/** What a OneRoster bundle would do to one class: a new classroom, or the classroom an earlier import made. */
export const rosterClassPreviewSchema = z.object({
  sourcedId: z.string(),
  title: z.string(),
  grade: z.string(),
  teacher: rosterPersonSchema.nullable(),
  students: z.number().int(),
  classroomId: idSchema.nullable(),
  /** Students the export adds to, or no longer lists in, the classroom an earlier import made. */
  joined: z.number().int(),
  left: z.number().int(),
  /** Why the class cannot take part (no teacher with an e-mail, no students, a new class after the draw), or null. */
  blocked: z.string().nullable(),
});
export type RosterClassPreview = z.infer<typeof rosterClassPreviewSchema>;

export const rosterSchoolPreviewSchema = z.object({
  sourcedId: z.string(),
  name: z.string(),
  identifier: z.string(),
  /** The district site it matches (by an earlier import, or by site code = the org's identifier), or null for a new site. */
  siteId: idSchema.nullable(),
  enrolled: z.boolean(),
  /** The export's administrator for the school, else the site's principal; null when the coordinator must name one. */
  principal: rosterPersonSchema.nullable(),
  principalFromExport: z.boolean(),
  classes: z.array(rosterClassPreviewSchema),
});
export type RosterSchoolPreview = z.infer<typeof rosterSchoolPreviewSchema>;

export const rosterPreviewSchema = z
  .object({
    drawCommitted: z.boolean(),
    schools: z.array(rosterSchoolPreviewSchema),
    totals: z.object({ schools: z.number().int(), classes: z.number().int(), students: z.number().int() }),
  })
  .meta({ id: 'RosterPreview' });
export type RosterPreview = z.infer<typeof rosterPreviewSchema>;

/** Which of the bundle's schools and classes take part (their sourcedIds); sent as the multipart field `selection`. */
export const rosterSelectionSchema = z.object({
  schools: z.array(plainText().min(1).max(255)).min(1, 'Choose at least one school').max(500),
  classes: z.array(plainText().min(1).max(255)).min(1, 'Choose at least one class').max(5000),
  /** Principals the coordinator names for chosen schools the export names none for, by the school's sourcedId. */
  principals: z
    .record(z.string().min(1).max(255), z.object({ name: z.string().trim().min(1, 'Enter the principal’s name').max(120), email: emailSchema }))
    .optional(),
});
export type RosterSelection = z.infer<typeof rosterSelectionSchema>;

/** One committed import and what it changed. */
export const rosterImportSchema = z
  .object({
    id: idSchema,
    studyId: idSchema,
    importedAt: z.string(),
    importedBy: z.string().nullable(),
    sitesEnrolled: z.number().int(),
    classroomsCreated: z.number().int(),
    classroomsUpdated: z.number().int(),
    studentsJoined: z.number().int(),
    /** Removed before the draw (no scores yet). */
    studentsRemoved: z.number().int(),
    /** Left after the draw: kept with their codes and recorded as attrition. */
    studentsLeft: z.number().int(),
    invitationsSent: z.number().int(),
    classrooms: z.array(z.object({ classroomId: idSchema, name: z.string(), joined: z.number().int(), left: z.number().int() })),
  })
  .meta({ id: 'RosterImport' });
export type RosterImport = z.infer<typeof rosterImportSchema>;

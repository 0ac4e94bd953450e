import { z } from 'zod';
import { idSchema, plainText } from './common.js';
import { emailSchema } from './auth.js';
import { armSchema } from './studies.js';

export const createCohortSchema = z.object({ name: plainText().trim().min(1, 'Enter a name').max(120) });
export const cohortSchema = z.object({ id: idSchema, studyId: idSchema, name: z.string() }).meta({ id: 'Cohort' });
export type Cohort = z.infer<typeof cohortSchema>;

const teacherSchema = z.object({
  email: emailSchema,
  name: plainText().trim().min(1, 'Enter the teacher’s name').max(120),
});

export const createClassroomSchema = z.object({
  siteId: idSchema,
  cohortId: idSchema,
  name: plainText().trim().min(1, 'Enter a name').max(120),
  grade: plainText().trim().min(1, 'Enter a grade').max(20),
  expectedSize: z.number({ message: 'Enter a number' }).int('Use a whole number').min(1).max(200),
  teacher: teacherSchema,
});
export type CreateClassroom = z.infer<typeof createClassroomSchema>;

export const updateClassroomSchema = createClassroomSchema
  .omit({ siteId: true })
  .partial()
  .refine((v) => Object.keys(v).length > 0, 'Change at least one field');
export type UpdateClassroom = z.infer<typeof updateClassroomSchema>;

export const classroomSchema = z
  .object({
    id: idSchema,
    studyId: idSchema,
    siteId: idSchema,
    siteName: z.string(),
    cohortId: idSchema,
    cohortName: z.string(),
    name: z.string(),
    grade: z.string(),
    expectedSize: z.number().int(),
    teacher: z.object({ id: idSchema, name: z.string(), email: z.string(), invitationPending: z.boolean() }),
    /** Null until a draw is committed. */
    arm: armSchema.nullable(),
  })
  .meta({ id: 'Classroom' });
export type Classroom = z.infer<typeof classroomSchema>;

/** One row of a bulk classroom CSV (columns: site_code, cohort, classroom, grade, expected_size, teacher_email, teacher_name). */
export const classroomCsvRowSchema = z.object({
  site_code: plainText().trim().min(1, 'site_code is empty'),
  cohort: plainText().trim().min(1, 'cohort is empty').max(120),
  classroom: plainText().trim().min(1, 'classroom is empty').max(120),
  grade: plainText().trim().min(1, 'grade is empty').max(20),
  expected_size: z.coerce.number({ message: 'expected_size is not a number' }).int('expected_size must be a whole number').min(1).max(200),
  teacher_email: emailSchema,
  teacher_name: plainText().trim().min(1, 'teacher_name is empty').max(120),
});
export const classroomCsvColumns = Object.keys(classroomCsvRowSchema.shape);

export const csvRowIssueSchema = z.object({ row: z.number().int(), column: z.string().nullable(), message: z.string() });
export type CsvRowIssue = z.infer<typeof csvRowIssueSchema>;

export const classroomImportResultSchema = z.object({ created: z.number().int(), classrooms: z.array(classroomSchema) });

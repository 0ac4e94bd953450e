import { z } from 'zod';
import { idSchema } from './common.js';

/** What waits for someone on their home page, by role: the coordinator's, the research lead's, the reviewer's, the admin's. */
export const toDoKinds = [
  'sheets_to_review',
  'late_sheets',
  'sites_to_enrol',
  'draw_to_run',
  'plan_to_seal',
  'runs_to_lock',
  'undeliverable_digests',
  'results_to_read',
  'invitations_pending',
  'accounts_without_role',
] as const;
export const toDoKindSchema = z.enum(toDoKinds);
export type ToDoKind = z.infer<typeof toDoKindSchema>;

export const toDoItemSchema = z.object({
  kind: toDoKindSchema,
  /** How many sheets, runs, digests or accounts wait; 1 for a step of the study itself (its plan, its draw). */
  count: z.number().int().positive(),
  /** The study it belongs to; null for the district's accounts. */
  study: z.object({ id: idSchema, title: z.string() }).nullable(),
});
export type ToDoItem = z.infer<typeof toDoItemSchema>;

export const toDoListSchema = z.object({ items: z.array(toDoItemSchema) }).meta({ id: 'ToDoList' });
export type ToDoList = z.infer<typeof toDoListSchema>;

import { z } from 'zod';
import { idSchema, plainText } from './common.js';
import { armSchema, waveKindSchema } from './studies.js';

export const sheetStates = ['open', 'submitted', 'accepted', 'returned'] as const;
export const sheetStateSchema = z.enum(sheetStates);
export type SheetState = z.infer<typeof sheetStateSchema>;

/**
 * A student code: letters, digits, dash, underscore or dot, up to 40 characters. Never a name —
 * spaces are refused, which catches most names typed by mistake. One rule everywhere: a code is
 * trimmed and upper-cased on entry, so `case-abc` and `CASE-ABC` are one student (the database
 * refuses a code in any other form).
 */
export const studentCodeSchema = z
  .string()
  .trim()
  .min(1, 'Enter the student code')
  .max(40, 'Student codes are at most 40 characters')
  .regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, 'Use the student code (letters, digits, - _ .), not a name')
  .toUpperCase();

/** One row as the grid or an upload sends it; range checks need the measure, so they run on the server too. */
export const scoreRowSchema = z.object({
  studentCode: studentCodeSchema,
  score: z.number({ message: 'Enter a number' }).finite().nullable(),
  left: z.boolean().default(false),
  note: plainText().trim().max(500).default(''),
});
export type ScoreRow = z.infer<typeof scoreRowSchema>;
export type ScoreRowInput = z.input<typeof scoreRowSchema>;

/** A measure's score range, inclusive; a yes/no measure (range 0–1) takes only 1 (yes) or 0 (no). */
export interface MeasureRange {
  minScore: number;
  maxScore: number;
  scale?: 'score' | 'yes-no';
}

export const YES_NO_PROBLEM = 'Answer yes or no (y/n, yes/no, 1/0 or true/false)';

/**
 * What is wrong with a row's score, or null: a score must lie within the measure's range (also for a
 * student who left), and a yes/no answer is 1 or 0. The grid and the API both check rows with it. A missing
 * score is not wrong in a draft; see `lacksScore`.
 */
export function scoreProblem(row: { score: number | null; left: boolean }, range: MeasureRange): string | null {
  if (row.score === null) return null;
  if (range.scale === 'yes-no') return row.score === 0 || row.score === 1 ? null : YES_NO_PROBLEM;
  if (row.score < range.minScore || row.score > range.maxScore) {
    return `The score ${row.score} is outside the measure's range ${range.minScore}–${range.maxScore}`;
  }
  return null;
}

/**
 * Reads a yes/no answer as typed, pasted or uploaded: yes/no, y/n, 1/0 or true/false in any case → 1, 0; an empty
 * cell → null; anything else → undefined (not an answer).
 */
export function parseYesNo(text: string): 0 | 1 | null | undefined {
  const t = text.trim().toLowerCase();
  if (t === '') return null;
  if (t === 'yes' || t === 'y' || t === '1' || t === 'true') return 1;
  if (t === 'no' || t === 'n' || t === '0' || t === 'false') return 0;
  return undefined;
}

/** A row still waiting for its score: a draft may hold it, a submitted sheet may not. */
export const lacksScore = (row: { score: number | null; left: boolean }) => row.score === null && !row.left;

export const MISSING_SCORE = 'Enter a score, or mark the student as having left the study';

export const MAX_SHEET_ROWS = 200_000;

export const saveSheetSchema = z.object({ rows: z.array(scoreRowSchema).max(MAX_SHEET_ROWS) });
export type SaveSheet = z.infer<typeof saveSheetSchema>;

/** Class-level aggregates, for sites that may report only summaries (when the plan allows it). */
export const sheetSummarySchema = z.object({
  n: z.number().int().min(2, 'A summary needs at least 2 students'),
  mean: z.number().finite(),
  sd: z.number().finite().min(0, 'The SD cannot be negative'),
});
export type SheetSummary = z.infer<typeof sheetSummarySchema>;

export const saveSummarySchema = z.object({ summary: sheetSummarySchema });

export const returnSheetSchema = z.object({ reasons: plainText().trim().min(5, 'Say what the teacher should fix').max(4000) });

export const rowIssueSchema = z.object({ row: z.number().int(), column: z.string().nullable(), message: z.string() });
export type RowIssue = z.infer<typeof rowIssueSchema>;

export const scoreSheetSchema = z
  .object({
    id: idSchema,
    studyId: idSchema,
    classroomId: idSchema,
    classroomName: z.string(),
    siteId: idSchema,
    siteName: z.string(),
    teacherName: z.string(),
    arm: armSchema.nullable(),
    waveId: idSchema,
    waveName: z.string(),
    waveKind: waveKindSchema,
    opensOn: z.string(),
    closesOn: z.string(),
    measureId: idSchema,
    measureName: z.string(),
    /** A yes/no measure's rows hold 1 (yes) or 0 (no). */
    scale: z.enum(['score', 'yes-no']),
    minScore: z.number(),
    maxScore: z.number(),
    state: sheetStateSchema,
    /** Rows entered per student, or a class summary. */
    mode: z.enum(['rows', 'summary']),
    /** Whether the study's plan lets this sheet be a class summary (n, mean, SD) instead of rows. */
    summaryAllowed: z.boolean(),
    /** Whether a person may still edit it now (state, wave window, lock). */
    editable: z.boolean(),
    locked: z.boolean(),
    returnReasons: z.string().nullable(),
    counts: z.object({ rows: z.number().int(), scored: z.number().int(), left: z.number().int() }),
    summary: sheetSummarySchema.nullable(),
    updatedAt: z.iso.datetime({ offset: true }),
    submittedAt: z.iso.datetime({ offset: true }).nullable(),
  })
  .meta({ id: 'ScoreSheet' });
export type ScoreSheet = z.infer<typeof scoreSheetSchema>;

export const scoreSheetDetailSchema = scoreSheetSchema
  .extend({ rows: z.array(scoreRowSchema) })
  .meta({ id: 'ScoreSheetDetail' });
export type ScoreSheetDetail = z.infer<typeof scoreSheetDetailSchema>;

export const scoreSheetsQuerySchema = z.object({
  studyId: idSchema,
  classroomId: idSchema.optional(),
  waveId: idSchema.optional(),
  state: sheetStateSchema.optional(),
});

export const uploadQuerySchema = z.object({
  /** true: parse and check only, write nothing. */
  dryRun: z.enum(['true', 'false']).default('false').transform((v) => v === 'true'),
  /** Must be true to replace rows already on the sheet. */
  replace: z.enum(['true', 'false']).default('false').transform((v) => v === 'true'),
});

export const uploadResultSchema = z.object({
  dryRun: z.boolean(),
  rows: z.number().int(),
  preview: z.array(scoreRowSchema),
  sheet: scoreSheetSchema.nullable(),
});

/** One cell of the completion matrix: a classroom's sheet for one wave and measure. */
export const completionCellSchema = z.object({
  sheetId: idSchema,
  waveId: idSchema,
  measureId: idSchema,
  state: sheetStateSchema,
  rows: z.number().int(),
  left: z.number().int(),
});
export type CompletionCell = z.infer<typeof completionCellSchema>;

export const completionRowSchema = z.object({
  classroomId: idSchema,
  classroomName: z.string(),
  siteId: idSchema,
  siteName: z.string(),
  teacherName: z.string(),
  arm: armSchema.nullable(),
  cells: z.array(completionCellSchema),
});
export type CompletionRow = z.infer<typeof completionRowSchema>;

export const completionMatrixSchema = z
  .object({
    waves: z.array(z.object({ id: idSchema, name: z.string() })),
    measures: z.array(z.object({ id: idSchema, name: z.string() })),
    rows: z.array(completionRowSchema),
    totals: z.record(sheetStateSchema, z.number().int()),
  })
  .meta({ id: 'CompletionMatrix' });
export type CompletionMatrix = z.infer<typeof completionMatrixSchema>;

export const reminderResultSchema = z.object({ teachersReminded: z.number().int(), sheetsMissing: z.number().int() });

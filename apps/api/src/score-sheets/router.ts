import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import {
  completionMatrixSchema,
  idParamsSchema,
  pageOf,
  reminderResultSchema,
  returnSheetSchema,
  saveSheetSchema,
  saveSummarySchema,
  scoreSheetDetailSchema,
  scoreSheetSchema,
  scoreSheetsQuerySchema,
  studyParamsSchema,
  studyWriterRoles,
  uploadQuerySchema,
  uploadResultSchema,
} from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { singleFile } from '../http/upload.js';
import { completionMatrix, sendReminders } from './completion.js';
import { getSheet, listSheets, moveSheet, saveRows, saveSummary, uploadRows, UPLOAD_LIMIT_BYTES } from './service.js';

export function scoreSheetsRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Score sheets';
  const sheet = { 200: { description: 'The sheet', schema: scoreSheetSchema } };

  r.route(
    {
      method: 'get',
      path: '/score-sheets',
      summary: 'Score sheets of a study (teachers: their own classrooms)',
      access: ['teacher', 'coordinator', 'research_lead'],
      tag,
      query: scoreSheetsQuerySchema,
      responses: { 200: { description: 'Sheets', schema: pageOf(scoreSheetSchema) } },
    },
    async ({ user, query }) => ({ body: await listSheets(deps.db, user!, query) }),
  );

  r.route(
    {
      method: 'get',
      path: '/score-sheets/:id',
      summary: 'One sheet with its rows',
      access: ['teacher', 'coordinator', 'research_lead'],
      tag,
      params: idParamsSchema,
      responses: { 200: { description: 'The sheet and its rows', schema: scoreSheetDetailSchema } },
    },
    async ({ user, params }) => ({ body: await getSheet(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'put',
      path: '/score-sheets/:id',
      summary: 'Save the sheet’s rows (the whole sheet; all rows or none)',
      access: ['teacher'],
      tag,
      params: idParamsSchema,
      body: saveSheetSchema,
      responses: { 200: { description: 'Saved', schema: scoreSheetDetailSchema } },
    },
    async ({ user, params, body }) => ({ body: await saveRows(deps.db, user!, params.id, body.rows) }),
  );

  r.route(
    {
      method: 'put',
      path: '/score-sheets/:id/summary',
      summary: 'Save a class summary (n, mean, SD) instead of rows, where the plan allows it',
      access: ['teacher'],
      tag,
      params: idParamsSchema,
      body: saveSummarySchema,
      responses: { 200: { description: 'Saved', schema: scoreSheetDetailSchema } },
    },
    async ({ user, params, body }) => ({ body: await saveSummary(deps.db, user!, params.id, body.summary) }),
  );

  r.route(
    {
      method: 'post',
      path: '/score-sheets/:id/upload',
      summary: 'Upload a CSV (multipart field `file`; columns student_code, score, optional left and note). `dryRun=true` checks only; `replace=true` confirms replacing existing rows',
      access: ['teacher'],
      tag,
      params: idParamsSchema,
      query: uploadQuerySchema,
      before: [singleFile(UPLOAD_LIMIT_BYTES)],
      responses: { 200: { description: 'Checked, and written unless a dry run', schema: uploadResultSchema } },
    },
    async ({ user, params, query, req }) => ({ body: await uploadRows(deps.db, user!, params.id, req.file!.buffer, query) }),
  );

  r.route(
    { method: 'post', path: '/score-sheets/:id/submit', summary: 'Send the sheet to the coordinator', access: ['teacher'], tag, params: idParamsSchema, responses: sheet },
    async ({ user, params }) => ({ body: await moveSheet(deps.db, user!, params.id, 'submit') }),
  );

  r.route(
    { method: 'post', path: '/score-sheets/:id/accept', summary: 'Accept a submitted sheet (it becomes read-only)', access: ['coordinator'], tag, params: idParamsSchema, responses: sheet },
    async ({ user, params }) => ({ body: await moveSheet(deps.db, user!, params.id, 'accept') }),
  );

  r.route(
    {
      method: 'post',
      path: '/score-sheets/:id/return',
      summary: 'Return a sheet to its teacher with the reasons',
      access: ['coordinator'],
      tag,
      params: idParamsSchema,
      body: returnSheetSchema,
      responses: sheet,
    },
    async ({ user, params, body }) => ({ body: await moveSheet(deps.db, user!, params.id, 'return', body.reasons) }),
  );

  r.route(
    {
      method: 'get',
      path: '/studies/:id/completion',
      summary: 'The completion matrix: classroom × wave × measure, each cell the sheet’s state and counts',
      access: studyWriterRoles,
      tag,
      params: studyParamsSchema,
      responses: { 200: { description: 'The matrix', schema: completionMatrixSchema } },
    },
    async ({ user, params }) => ({ body: await completionMatrix(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/reminders',
      summary: 'E-mail each teacher with missing sheets, one message listing them all',
      access: ['coordinator'],
      tag,
      params: studyParamsSchema,
      body: z.object({ waveId: z.uuid().optional() }),
      responses: { 200: { description: 'Who was reminded', schema: reminderResultSchema } },
    },
    async ({ user, params, body }) => ({ body: await sendReminders(deps, user!, params.id, body.waveId) }),
  );

  return r.router;
}

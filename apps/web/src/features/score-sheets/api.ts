import {
  completionMatrixSchema,
  pageOf,
  reminderResultSchema,
  scoreSheetDetailSchema,
  scoreSheetSchema,
  uploadResultSchema,
  type ScoreRowInput,
  type ScoreSheet,
  type ScoreSheetDetail,
  type SheetState,
  type SheetSummary,
} from '@evenhand/entities';
import { queryOptions, useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';
import { invalidateStudyFindings } from '@/lib/queries';
import { uploadFile } from '@/lib/upload';

const sheetsPageSchema = pageOf(scoreSheetSchema);

export interface SheetsFilter {
  studyId: string;
  classroomId?: string;
  waveId?: string;
  state?: SheetState;
}

export const scoreSheetKeys = {
  all: ['score-sheets'] as const,
  lists: () => [...scoreSheetKeys.all, 'list'] as const,
  list: (filter: SheetsFilter) => [...scoreSheetKeys.lists(), filter] as const,
  details: () => [...scoreSheetKeys.all, 'detail'] as const,
  detail: (id: string) => [...scoreSheetKeys.details(), id] as const,
  completions: () => [...scoreSheetKeys.all, 'completion'] as const,
  completion: (studyId: string) => [...scoreSheetKeys.completions(), studyId] as const,
};

export function sheetsQueryOptions(filter: SheetsFilter) {
  return queryOptions({
    queryKey: scoreSheetKeys.list(filter),
    queryFn: ({ signal }) => apiRequest('/score-sheets', { query: { ...filter }, schema: sheetsPageSchema, signal }),
  });
}

export function sheetQueryOptions(id: string) {
  return queryOptions({
    queryKey: scoreSheetKeys.detail(id),
    queryFn: ({ signal }) => apiRequest(`/score-sheets/${id}`, { schema: scoreSheetDetailSchema, signal }),
  });
}

export function completionQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: scoreSheetKeys.completion(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/completion`, { schema: completionMatrixSchema, signal }),
  });
}

/**
 * After a sheet changed: its detail holds the answer, and every list and matrix is read again, as are the Checks and
 * the evidence verdicts, which count its classroom's students.
 */
function sheetChanged(queryClient: QueryClient, sheet: ScoreSheet | ScoreSheetDetail) {
  queryClient.setQueryData(scoreSheetKeys.detail(sheet.id), (old) => (old ? { ...old, ...sheet } : 'rows' in sheet ? sheet : undefined));
  void queryClient.invalidateQueries({ queryKey: scoreSheetKeys.lists() });
  void queryClient.invalidateQueries({ queryKey: scoreSheetKeys.completions() });
  invalidateStudyFindings(queryClient, sheet.studyId);
}

export function saveRows(id: string, rows: ScoreRowInput[], signal?: AbortSignal) {
  return apiRequest(`/score-sheets/${id}`, { method: 'PUT', body: { rows }, schema: scoreSheetDetailSchema, signal });
}

/** Autosave: the editor keeps what was typed, so the cache takes the answer's counts and state, not its rows. */
export function useSaveRows(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ rows, signal }: { rows: ScoreRowInput[]; signal?: AbortSignal }) => saveRows(id, rows, signal),
    onSuccess: (sheet) => sheetChanged(queryClient, sheet),
  });
}

export function useSaveSummary(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (summary: SheetSummary) =>
      apiRequest(`/score-sheets/${id}/summary`, { method: 'PUT', body: { summary }, schema: scoreSheetDetailSchema }),
    onSuccess: (sheet) => sheetChanged(queryClient, sheet),
  });
}

type Step = 'submit' | 'accept' | 'return';

export function useMoveSheet(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ step, reasons }: { step: Step; reasons?: string }) =>
      apiRequest(`/score-sheets/${id}/${step}`, {
        method: 'POST',
        body: step === 'return' ? { reasons } : {},
        schema: scoreSheetSchema,
      }),
    onSuccess: (sheet) => sheetChanged(queryClient, sheet),
  });
}

export interface UploadOptions {
  file: File;
  dryRun: boolean;
  replace?: boolean;
  onProgress?: (fraction: number) => void;
  signal?: AbortSignal;
}

export function uploadSheet(id: string, { file, dryRun, replace = false, onProgress, signal }: UploadOptions) {
  return uploadFile(`/score-sheets/${id}/upload`, {
    file,
    query: { dryRun: String(dryRun), replace: String(replace) },
    schema: uploadResultSchema,
    onProgress,
    signal,
  });
}

export function useUploadSheet(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (options: UploadOptions) => uploadSheet(id, options),
    onSuccess: async (result) => {
      if (result.dryRun) return;
      // The rows changed on the server: the editor starts again from them.
      await queryClient.invalidateQueries({ queryKey: scoreSheetKeys.detail(id) });
      void queryClient.invalidateQueries({ queryKey: scoreSheetKeys.lists() });
      void queryClient.invalidateQueries({ queryKey: scoreSheetKeys.completions() });
      if (result.sheet) invalidateStudyFindings(queryClient, result.sheet.studyId);
    },
  });
}

export function useSendReminders(studyId: string) {
  return useMutation({
    mutationFn: (waveId?: string) =>
      apiRequest(`/studies/${studyId}/reminders`, { method: 'POST', body: waveId ? { waveId } : {}, schema: reminderResultSchema }),
  });
}

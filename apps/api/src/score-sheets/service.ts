import type { DataSource, EntityManager } from 'typeorm';
import { districtWideRoles, MISSING_SCORE, type ScoreRow, type ScoreSheet, type ScoreSheetDetail, type SessionUser, type SheetSummary } from '@evenhand/entities';
import { ScoreSheetEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import { AppError } from '../errors.js';
import { csvBatches } from '../lib/csv.js';
import { currentPlan } from '../plan/service.js';
import { findVisibleStudy, hasRole, sitesOf, teaches } from '../studies/access.js';
import { ensureSheets, sheetRow, sheetScoreRows, studentsWithoutScore, visibleSheetRows, type SheetRow } from './queries.js';
import { storeSheetDigestsAndSums } from './sums.js';
import { rowFromCsv } from './rows.js';
import { applyStaged, stageRows } from './write.js';

function editable(r: SheetRow): boolean {
  if (r.locked || r.state === 'submitted' || r.state === 'accepted') return false;
  // A returned sheet can be fixed after its wave closed; a new one only while the wave is open.
  return r.state === 'returned' || r.wave_open;
}

function toSheet(r: SheetRow): ScoreSheet {
  return {
    id: r.id,
    studyId: r.study_id,
    classroomId: r.classroom_id,
    classroomName: r.classroom_name,
    siteId: r.site_id,
    siteName: r.site_name,
    teacherName: r.teacher_name,
    arm: r.arm,
    waveId: r.wave_id,
    waveName: r.wave_name,
    waveKind: r.wave_kind,
    opensOn: r.opens_on,
    closesOn: r.closes_on,
    measureId: r.measure_id,
    measureName: r.measure_name,
    scale: r.scale,
    minScore: Number(r.min_score),
    maxScore: Number(r.max_score),
    state: r.state,
    mode: r.mode,
    summaryAllowed: r.summary_allowed,
    editable: editable(r),
    locked: r.locked,
    returnReasons: r.return_reasons,
    counts: { rows: r.mode === 'summary' ? (r.summary_n ?? 0) : r.rows, scored: r.mode === 'summary' ? (r.summary_n ?? 0) : r.scored, left: r.left_count },
    summary: r.mode === 'summary' ? { n: r.summary_n!, mean: Number(r.summary_mean), sd: Number(r.summary_sd) } : null,
    updatedAt: new Date(r.updated_at).toISOString(),
    submittedAt: r.submitted_at ? new Date(r.submitted_at).toISOString() : null,
  };
}

const seesWholeStudy = (user: SessionUser) => hasRole(user, ...districtWideRoles);

export async function listSheets(db: DataSource, user: SessionUser, q: { studyId: string; classroomId?: string; waveId?: string; state?: string }) {
  await findVisibleStudy(db.manager, user, q.studyId);
  await ensureSheets(db.manager, q.studyId);
  const rows = await visibleSheetRows(db.manager, q, { wholeStudy: seesWholeStudy(user), userId: user.id, teacherSites: sitesOf(user, 'teacher') });
  return { items: rows.map(toSheet), total: rows.length };
}

/** The sheet if the user may see it: teachers their own classrooms' only; others' IDs answer 404. */
async function loadSheet(manager: EntityManager, user: SessionUser, id: string, lock = false): Promise<SheetRow> {
  if (lock) await manager.findOne(ScoreSheetEntity, { where: { id }, select: { id: true }, lock: { mode: 'pessimistic_write' } });
  const row = await sheetRow(manager, id);
  if (!row || (!seesWholeStudy(user) && !teaches(user, row))) throw AppError.notFound('The score sheet');
  await findVisibleStudy(manager, user, row.study_id);
  return row;
}

async function readRows(manager: EntityManager, sheetId: string): Promise<ScoreRow[]> {
  const rows = await sheetScoreRows(manager, sheetId);
  return rows.map((r) => ({ studentCode: r.student_code, score: r.score === null ? null : Number(r.score), left: r.left_study, note: r.note }));
}

export async function getSheet(db: DataSource, user: SessionUser, id: string): Promise<ScoreSheetDetail> {
  const row = await loadSheet(db.manager, user, id);
  return { ...toSheet(row), rows: await readRows(db.manager, id) };
}

function assertEditable(row: SheetRow, user: SessionUser) {
  if (row.teacher_id !== user.id) throw AppError.forbidden('Only the classroom’s teacher enters its scores');
  if (row.locked) throw AppError.conflict('This score sheet was used by a locked result and can no longer change');
  if (row.state === 'accepted') throw AppError.conflict('This score sheet was accepted and is read-only');
  if (row.state === 'submitted') throw AppError.conflict('This score sheet is submitted; it can change again only if the coordinator returns it');
  if (!editable(row)) throw AppError.conflict(`The ${row.wave_name} wave is closed (${row.opens_on} to ${row.closes_on}); ask the coordinator to reopen it`);
}

export async function saveRows(db: DataSource, user: SessionUser, id: string, rows: ScoreRow[]): Promise<ScoreSheetDetail> {
  await db.transaction(async (manager) => {
    const sheet = await loadSheet(manager, user, id, true);
    assertEditable(sheet, user);
    const staged = await stageRows(manager, sheet, [rows.map((row, i) => ({ line: i + 1, row, issues: [] }))]);
    await applyStaged(manager, user.id, sheet, staged.rows, sheet.rows === 0);
    await markMode(manager, id, null);
  });
  return getSheet(db, user, id);
}

export const UPLOAD_LIMIT_BYTES = 10 * 1024 * 1024;

/** The file's records as rows, a batch at a time, each with its line and what is wrong with it. */
async function* rowsOfCsv(file: Buffer, seen: { records: number }, scale: ScoreSheet['scale']) {
  for await (const batch of csvBatches(file, ['student_code', 'score'])) {
    seen.records += batch.length;
    yield batch.map(({ line, values }) => ({ line, ...rowFromCsv(values, line, scale) }));
  }
}

/**
 * Reads and checks an uploaded CSV as it streams into the staging table; writes only when not a dry
 * run, and replaces rows already on the sheet only when told to. All rows or none.
 */
export async function uploadRows(db: DataSource, user: SessionUser, id: string, file: Buffer, opts: { dryRun: boolean; replace: boolean }) {
  return db.transaction(async (manager) => {
    const sheet = await loadSheet(manager, user, id, true);
    assertEditable(sheet, user);
    const seen = { records: 0 };
    const staged = await stageRows(manager, sheet, rowsOfCsv(file, seen, sheet.scale));
    if (!seen.records) throw AppError.validation('The file has a header row but no data rows');
    if (opts.dryRun) return { dryRun: true, rows: staged.rows, preview: staged.preview, sheet: null };
    if (sheet.rows > 0 && !opts.replace) {
      throw AppError.conflict(`The sheet already has ${sheet.rows} rows; confirm to replace them with the file's ${staged.rows}`, { needsConfirmation: true });
    }
    await applyStaged(manager, user.id, sheet, staged.rows, sheet.rows === 0);
    await markMode(manager, id, null);
    const updated = await sheetRow(manager, id);
    return { dryRun: false, rows: staged.rows, preview: staged.preview, sheet: toSheet(updated!) };
  });
}

/** Rows, or a class summary instead of rows. */
async function markMode(manager: EntityManager, id: string, summary: SheetSummary | null) {
  await manager.update(ScoreSheetEntity, id, { mode: summary ? 'summary' : 'rows', summaryN: summary?.n ?? null, summaryMean: summary?.mean ?? null, summarySd: summary?.sd ?? null });
}

export async function saveSummary(db: DataSource, user: SessionUser, id: string, summary: SheetSummary): Promise<ScoreSheetDetail> {
  await db.transaction(async (manager) => {
    const row = await loadSheet(manager, user, id, true);
    assertEditable(row, user);
    const plan = await currentPlan(manager, row.study_id);
    if (!plan?.content.summaryEntryAllowed) throw AppError.conflict('The study’s plan asks for per-student scores, not class summaries');
    // Counts of yes answers come from the rows; a mean and SD would not give them exactly.
    if (row.scale === 'yes-no') throw AppError.conflict('A yes/no measure takes one answer per student, not a class summary');
    if (summary.mean < Number(row.min_score) || summary.mean > Number(row.max_score)) {
      throw AppError.validation('The mean is outside the measure’s range', [{ path: 'summary.mean', message: `Use a mean between ${row.min_score} and ${row.max_score}` }]);
    }
    // A summary replaces the rows: removing them is audited and releases their codes like any write.
    await stageRows(manager, row, []);
    await applyStaged(manager, user.id, row, 0, row.rows === 0);
    await markMode(manager, id, summary);
    await recordAudit(manager, { actorId: user.id, studyId: row.study_id, action: 'scores.summary_saved', entityType: 'score_sheet', entityId: id, after: summary });
  });
  return getSheet(db, user, id);
}

type Transition = 'submit' | 'accept' | 'return';

/** The sheet's workflow: open → submitted → accepted, or returned (with reasons) → submitted … */
export async function moveSheet(db: DataSource, user: SessionUser, id: string, step: Transition, reasons?: string): Promise<ScoreSheet> {
  await db.transaction(async (manager) => {
    const row = await loadSheet(manager, user, id, true);
    if (row.locked) throw AppError.conflict('This score sheet was used by a locked result and can no longer change');
    const patch: Partial<ScoreSheetEntity> = {};
    if (step === 'submit') {
      if (row.teacher_id !== user.id) throw AppError.forbidden('Only the classroom’s teacher submits its scores');
      if (row.state !== 'open' && row.state !== 'returned') throw AppError.conflict(`A ${row.state} sheet cannot be submitted`);
      if (!editable(row)) throw AppError.conflict(`The ${row.wave_name} wave is closed; ask the coordinator to reopen it`);
      if (row.mode === 'rows' && row.rows === 0) throw AppError.conflict('Enter at least one student before submitting');
      const waiting = await studentsWithoutScore(manager, id);
      if (waiting > 0) {
        throw AppError.conflict(`${waiting} student${waiting === 1 ? ' has' : 's have'} no score yet: ${MISSING_SCORE.toLowerCase()}, then submit`, { studentsWithoutScore: waiting });
      }
      Object.assign(patch, { state: 'submitted', submittedAt: new Date(), submittedBy: user.id });
    } else {
      if (!hasRole(user, 'coordinator')) throw AppError.forbidden('Only the coordinator accepts or returns score sheets');
      if (step === 'accept' && row.state !== 'submitted') throw AppError.conflict(`Only a submitted sheet can be accepted; this one is ${row.state}`);
      if (step === 'return' && row.state !== 'submitted' && row.state !== 'accepted') throw AppError.conflict(`A ${row.state} sheet cannot be returned`);
      Object.assign(patch, {
        state: step === 'accept' ? 'accepted' : 'returned',
        reviewedAt: new Date(),
        reviewedBy: user.id,
        returnReasons: step === 'return' ? reasons! : row.return_reasons,
      });
    }
    await manager.update(ScoreSheetEntity, id, patch);
    if (patch.state === 'submitted' || patch.state === 'accepted') await storeSheetDigestsAndSums(manager, [id]);
    await recordAudit(manager, {
      actorId: user.id,
      studyId: row.study_id,
      action: `score_sheet.${step === 'submit' ? 'submitted' : step === 'accept' ? 'accepted' : 'returned'}`,
      entityType: 'score_sheet',
      entityId: id,
      before: { state: row.state },
      after: { state: patch.state, ...(reasons ? { reasons } : {}) },
    });
  });
  const updated = await sheetRow(db.manager, id);
  return toSheet(updated!);
}


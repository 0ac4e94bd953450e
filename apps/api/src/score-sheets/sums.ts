import type { EntityManager } from 'typeorm';
import { lockSheetClassroomsSql, sheetMomentsSql, storeSheetDigests, storeSheetSumsSql, sumTargetsSql, type SheetMoments } from './queries.js';

// A sheet's exact sums (n, Σy, Σy², leavers, and the pairs with its pretest sheet): stored when it stops changing, read by runs.

/** The moments of a row selected with `storedMomentsColumns`: the row itself, or null when it has none stored (no copy: 80 000 copies cost a tenth of a second). */
export function storedMomentsOf(row: { sheet_id: string | null; stored_present: boolean | null }): SheetMoments | null {
  return row.stored_present ? (row as unknown as SheetMoments) : null;
}

/** What a sheet's rows give once they stop changing (submitted, accepted), stored so runs need not read them again. */
export async function storeSheetDigestsAndSums(manager: EntityManager, sheetIds: string[]): Promise<void> {
  await storeSheetDigests(manager, sheetIds);
  await storeSheetSums(manager, sheetIds);
}

/**
 * Stores the sums of sheets whose rows stop changing (submitted, accepted); when one of them is a baseline sheet, also
 * of its classroom's submitted or accepted sheets of the same measure in the other waves, which pair with it. Takes the
 * classrooms' writer lock first, so no write to these sheets commits between reading the rows and storing their sums.
 */
async function storeSheetSums(manager: EntityManager, sheetIds: string[]): Promise<void> {
  // The writers' lock on the sheets' classrooms, in its own statement: the sums below then read the rows as committed after it.
  await manager.query(lockSheetClassroomsSql, [sheetIds]);
  const targets: { sheet_id: string; pretest_sheet_id: string | null }[] = await manager.query(sumTargetsSql, [sheetIds]);
  if (targets.length === 0) return;
  await manager.query(storeSheetSumsSql, [
    targets.map((t) => t.sheet_id),
    targets.map((t) => t.pretest_sheet_id),
  ]);
}

/** Sums the given row sheets now, each paired with the baseline sheet given (null: none), for readers of sheets without valid stored sums. */
export async function sumSheets(manager: EntityManager, wanted: { sheetId: string; pretestSheetId: string | null }[]): Promise<Map<string, SheetMoments>> {
  if (wanted.length === 0) return new Map();
  const rows: SheetMoments[] = await manager.query(sheetMomentsSql, [
    wanted.map((w) => w.sheetId),
    wanted.map((w) => w.pretestSheetId),
  ]);
  return new Map(rows.map((m) => [m.sheet_id, m]));
}

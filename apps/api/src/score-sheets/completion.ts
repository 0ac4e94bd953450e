import type { DataSource } from 'typeorm';
import type { SessionUser, SheetState } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { queueMail } from '../mail/outbox.js';
import { reminderMail } from '../mail/templates.js';
import { findVisibleStudy } from '../studies/access.js';
import { completionCells, ensureSheets, type CellRow } from './queries.js';

async function cells(db: DataSource, studyId: string): Promise<CellRow[]> {
  await ensureSheets(db.manager, studyId);
  return completionCells(db.manager, studyId);
}

/** The coordinator's matrix: one row per classroom, one cell per wave and measure. */
export async function completionMatrix(db: DataSource, user: SessionUser, studyId: string) {
  await findVisibleStudy(db.manager, user, studyId);
  const all = await cells(db, studyId);
  const waves = [...new Map(all.map((c) => [c.wave_id, { id: c.wave_id, name: c.wave_name }])).values()];
  const measures = [...new Map(all.map((c) => [c.measure_id, { id: c.measure_id, name: c.measure_name }])).values()];
  const rows = new Map<string, { classroomId: string; classroomName: string; siteId: string; siteName: string; teacherName: string; arm: string | null; cells: object[] }>();
  for (const c of all) {
    const row = rows.get(c.classroom_id) ?? {
      classroomId: c.classroom_id,
      classroomName: c.classroom_name,
      siteId: c.site_id,
      siteName: c.site_name,
      teacherName: c.teacher_name,
      arm: c.arm,
      cells: [],
    };
    row.cells.push({ sheetId: c.sheet_id, waveId: c.wave_id, measureId: c.measure_id, state: c.state, rows: c.rows, left: c.left_count });
    rows.set(c.classroom_id, row);
  }
  const totals = { open: 0, submitted: 0, accepted: 0, returned: 0 } as Record<SheetState, number>;
  for (const c of all) totals[c.state]++;
  return { waves, measures, rows: [...rows.values()], totals };
}

/** One e-mail per teacher listing every sheet still open or returned in waves that have begun. */
export async function sendReminders(deps: Deps, user: SessionUser, studyId: string, waveId?: string) {
  const study = await findVisibleStudy(deps.db.manager, user, studyId);
  const missing = (await cells(deps.db, studyId)).filter(
    (c) => c.wave_started && (c.state === 'open' || c.state === 'returned') && (!waveId || c.wave_id === waveId),
  );
  const byTeacher = new Map<string, { id: string; email: string; name: string; items: string[] }>();
  for (const c of missing) {
    const t = byTeacher.get(c.teacher_id) ?? { id: c.teacher_id, email: c.teacher_email, name: c.teacher_name, items: [] };
    t.items.push(`${c.classroom_name} (${c.site_name}) — ${c.wave_name}, ${c.measure_name}${c.state === 'returned' ? ' (returned for corrections)' : ''}`);
    byTeacher.set(c.teacher_id, t);
  }
  await deps.db.transaction(async (manager) => {
    for (const t of byTeacher.values()) {
      const message = reminderMail({ name: t.name, studyTitle: study.title, missing: t.items, link: `${deps.config.appUrl}/my-classes` });
      await queueMail(manager, deps, { kind: 'reminder', recipient: { id: t.id, email: t.email }, message, actorId: user.id, studyId });
    }
  });
  return { teachersReminded: byTeacher.size, sheetsMissing: missing.length };
}

import seedrandom from 'seedrandom';
import type { DataSource, EntityManager } from 'typeorm';
import { ensureSheets } from '../score-sheets/queries.js';
import { addDays, REVIEW_DAYS, type DemoTimeline, type DemoWindow } from './demo-timeline.js';

type Phase = 'collection' | 'follow-up';

/**
 * Invented scores for the demo study, from a fixed seed: pupils vary within classrooms and
 * classrooms vary around their arm (ICC about .15), with a modest true effect of the routine and a
 * little more attrition in the intervention arm. Written straight to the tables, since the demo's
 * waves closed long ago; each sheet is submitted inside its wave's window and reviewed soon after
 * (`timeline`). The 'collection' phase fills the baseline and outcome waves, every sheet accepted before
 * the result is locked; the 'follow-up' phase, after the lock, tells the collection story.
 */
export async function seedDemoScores(dataSource: DataSource, studyId: string, timeline: DemoTimeline, phase: Phase = 'collection'): Promise<void> {
  await dataSource.transaction((manager) => writeScores(manager, studyId, timeline, phase));
}

/** When the `index`-th sheet of a wave was submitted and reviewed: inside the window, reviewed within days of it. */
function sheetTimes(w: DemoWindow, index: number): { submitted: Date; reviewed: Date } {
  const span = Math.round((new Date(w.closesOn).getTime() - new Date(w.opensOn).getTime()) / 86_400_000) - 5;
  const submitted = addDays(`${w.opensOn}T14:00:00Z`, 3 + (index % span));
  const submittedAt = new Date(submitted.getTime() + (index % 53) * 60_000);
  const latest = addDays(`${w.closesOn}T16:00:00Z`, REVIEW_DAYS);
  const reviewed = addDays(submittedAt, 1 + (index % 3));
  return { submitted: submittedAt, reviewed: reviewed < latest ? reviewed : latest };
}

async function writeScores(db: EntityManager, studyId: string, timeline: DemoTimeline, phase: Phase): Promise<void> {
  const waves: { id: string; kind: string }[] = await db.query(`SELECT id, kind FROM waves WHERE study_id = $1`, [studyId]);
  const baseline = waves.find((w) => w.kind === 'baseline')!.id;
  const outcome = waves.find((w) => w.kind === 'outcome')!.id;
  const followUp = waves.find((w) => w.kind === 'follow-up')?.id;
  const phaseWaves = phase === 'collection' ? [baseline, outcome] : followUp ? [followUp] : [];
  if (!phaseWaves.length) return;
  const [already] = await db.query(`SELECT 1 FROM scores WHERE study_id = $1 AND wave_id = ANY($2) LIMIT 1`, [studyId, phaseWaves]);
  if (already) return;
  await ensureSheets(db, studyId);
  const windows = new Map<string, DemoWindow>([
    [baseline, timeline.baseline],
    [outcome, timeline.outcome],
    ...(followUp ? [[followUp, timeline.followUp] as [string, DemoWindow]] : []),
  ]);
  const sheetsInWave = new Map<string, number>();
  let random = seedrandom('larkspur-valley-scores');
  const normal = () => Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
  const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));

  const classrooms: { id: string; name: string; site_code: string; grade: string; expected_size: number; arm: string; teacher_email: string }[] = await db.query(
    `SELECT c.id, c.name, s.code AS site_code, c.grade, c.expected_size, c.arm, u.email AS teacher_email
       FROM classrooms c JOIN sites s ON s.id = c.site_id JOIN users u ON u.id = c.teacher_id
      WHERE c.study_id = $1 ORDER BY c.arm, s.code, c.name`,
    [studyId],
  );
  const measures: { id: string; kind: string; scale: string }[] = await db.query(`SELECT id, kind, scale FROM measures WHERE study_id = $1`, [studyId]);
  const fluency = measures.find((m) => m.kind === 'achievement' && m.scale === 'score')!.id;
  // Yes/no: reading at grade level (a fluency cut for the grade), in autumn and by spring; stored as 1 and 0.
  const gradeLevel = measures.find((m) => m.scale === 'yes-no')?.id;
  const engagement = measures.find((m) => m.kind === 'behaviour')!.id;

  // The follow-up sheets that tell the collection story: one returned for corrections, one awaiting review, and a
  // classroom that never entered its own. The locked runs read none of them (they read the baseline and outcome).
  const story = new Map<string, 'returned' | 'submitted' | 'missing'>([
    [`ALD|Room 3B|${fluency}`, 'returned'],
    [`BRK|Room 4A|${fluency}`, 'submitted'],
    ...measures.map((m) => [`FRN|Room 3A|${m.id}`, 'missing'] as [string, 'missing']),
  ]);

  // Each classroom draws from its own stream, keyed by its place within its arm, so the story is the same whichever
  // classrooms the draw (seeded, but over fresh UUIDs) put in each arm.
  let pupil = 0;
  const placeInArm = new Map<string, number>();
  for (const c of classrooms) {
    const place = placeInArm.get(c.arm) ?? 0;
    placeInArm.set(c.arm, place + 1);
    random = seedrandom(`larkspur-valley-scores|${c.arm}|${place}`);
    // The follow-up draws from a stream of its own, so it leaves the first two waves' scores as they were.
    const later = seedrandom(`larkspur-valley-scores|${c.arm}|${place}|follow-up`);
    const laterNormal = () => Math.sqrt(-2 * Math.log(1 - later())) * Math.cos(2 * Math.PI * later());
    const treated = c.arm === 'intervention';
    const classEffect = { fluency: normal() * 8, engagement: normal() * 0.2 }; // outcome ICC about .15
    const rows: Record<string, { code: string; score: number | null; left: boolean; note: string }[]> = {};
    for (let k = 0; k < c.expected_size; k++) {
      pupil++;
      const code = `LV-${String(pupil).padStart(4, '0')}`;
      const gradeShift = c.grade === '4' ? 8 : 0;
      const f0 = clamp(Math.round(82 + gradeShift + classEffect.fluency * 0.5 + normal() * 27), 0, 250);
      const e0 = clamp(Math.round((3.2 + classEffect.engagement * 0.6 + normal() * 0.62) * 10) / 10, 1, 5);
      const left = random() < (treated ? 0.11 : 0.08);
      const f1 = clamp(Math.round(0.75 * f0 + 42 + gradeShift * 0.25 + classEffect.fluency + (treated ? 8 : 0) + normal() * 19), 0, 250);
      const e1 = clamp(Math.round((0.6 * e0 + 1.35 + classEffect.engagement + (treated ? 0.22 : 0) + normal() * 0.5) * 10) / 10, 1, 5);
      (rows[`${baseline}|${fluency}`] ??= []).push({ code, score: f0, left: false, note: '' });
      (rows[`${baseline}|${engagement}`] ??= []).push({ code, score: e0, left: false, note: '' });
      (rows[`${outcome}|${fluency}`] ??= []).push({ code, score: left ? null : f1, left, note: left ? 'moved to another district' : '' });
      (rows[`${outcome}|${engagement}`] ??= []).push({ code, score: left ? null : e1, left, note: '' });
      const f2 = clamp(Math.round(0.8 * f1 + 30 + gradeShift * 0.25 + classEffect.fluency * 0.5 + (treated ? 4 : 0) + laterNormal() * 18), 0, 250);
      const e2 = clamp(Math.round((0.7 * e1 + 1 + classEffect.engagement * 0.5 + laterNormal() * 0.5) * 10) / 10, 1, 5);
      if (followUp) {
        (rows[`${followUp}|${fluency}`] ??= []).push({ code, score: left ? null : f2, left, note: '' });
        (rows[`${followUp}|${engagement}`] ??= []).push({ code, score: left ? null : e2, left, note: '' });
      }
      if (gradeLevel) {
        const cut = c.grade === '4' ? 100 : 90;
        (rows[`${baseline}|${gradeLevel}`] ??= []).push({ code, score: f0 >= cut ? 1 : 0, left: false, note: '' });
        (rows[`${outcome}|${gradeLevel}`] ??= []).push({ code, score: left ? null : f1 >= cut + 10 ? 1 : 0, left, note: '' });
        if (followUp) (rows[`${followUp}|${gradeLevel}`] ??= []).push({ code, score: left ? null : f2 >= cut + 20 ? 1 : 0, left, note: '' });
      }
    }
    if (phase === 'collection') await db.query(`INSERT INTO students (study_id, student_code, classroom_id) SELECT $1, unnest($2::varchar[]), $3`, [studyId, rows[`${baseline}|${fluency}`].map((r) => r.code), c.id]);
    for (const [key, list] of Object.entries(rows)) {
      const [waveId, measureId] = key.split('|');
      if (!phaseWaves.includes(waveId)) continue;
      const role = waveId === followUp ? story.get(`${c.site_code}|${c.name}|${measureId}`) : undefined;
      if (role === 'missing') continue;
      const [sheet] = await db.query(`SELECT id FROM score_sheets WHERE classroom_id = $1 AND wave_id = $2 AND measure_id = $3`, [c.id, waveId, measureId]);
      const index = sheetsInWave.get(waveId) ?? 0;
      sheetsInWave.set(waveId, index + 1);
      const times = sheetTimes(windows.get(waveId)!, index);
      // The slip the coordinator spotted: a follow-up score far below the pupil's spring one.
      if (role === 'returned') list[3].score = 12;
      await db.query(
        `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study, note)
         SELECT $1, $2, $3, $4, $5, t.code, t.score, t.left_study, t.note
           FROM unnest($6::varchar[], $7::numeric[], $8::boolean[], $9::varchar[]) AS t(code, score, left_study, note)`,
        [sheet.id, studyId, c.id, waveId, measureId, list.map((r) => r.code), list.map((r) => r.score), list.map((r) => r.left), list.map((r) => r.note)],
      );
      const state = role ?? 'accepted';
      const reviewed = state === 'submitted' ? null : times.reviewed;
      await db.query(
        `UPDATE score_sheets SET state = $2::varchar, submitted_at = $4::timestamptz, return_reasons = $3, reviewed_at = $5::timestamptz, updated_at = coalesce($5::timestamptz, $4::timestamptz) WHERE id = $1`,
        [sheet.id, state, state === 'returned' ? `${list[3].code} reads 12 words per minute at the follow-up, far below spring — please check the recording.` : null, times.submitted, reviewed],
      );
    }
  }
}

import { afterEach, describe, expect, it } from 'vitest';
import { startTestApp, type TestApp } from '../../test/app.js';
import { urlForDatabase } from '../../test/database.js';
import { createDataSource } from '../db/data-source.js';
import { createLogger } from '../logger.js';
import { createMailer } from '../mail/mailer.js';
import { DEMO_STUDY_TITLE, DRAFT_STUDY_TITLE, seedDemoStudies } from './demo-study.js';
import { demoTimeline, placeOnTimeline } from './demo-timeline.js';

let t: TestApp | undefined;
afterEach(async () => {
  await t?.close();
  t = undefined;
});

/** Seeds the demo studies as `npm run seed` does on `today`: through the services, then onto the story as the owner. */
async function seedOn(today: Date) {
  t = await startTestApp({ workers: true });
  const mailer = createMailer(t.config);
  const seeded = await seedDemoStudies({ config: t.config, db: t.db, mailer, logger: createLogger(t.config), jobs: t.jobs }, today);
  mailer.close();
  expect(seeded).not.toBeNull();
  const owner = createDataSource(urlForDatabase(new URL(t.databaseUrl).pathname.slice(1)));
  await owner.initialize();
  await owner.transaction((m) => placeOnTimeline(m, seeded!));
  await owner.destroy();
  return t.db;
}

const ms = (d: Date | string) => new Date(d).getTime();
/** The first moment of a calendar date and the first moment after it (UTC). */
const startOf = (isoDay: string) => ms(`${isoDay}T00:00:00Z`);
const endOf = (isoDay: string) => startOf(isoDay) + 86_400_000;

async function expectOrderedDemo(today: Date) {
  const db = await seedOn(today);
  const [study] = await db.query(`SELECT id, created_at FROM studies WHERE title = $1`, [DEMO_STUDY_TITLE]);
  const waves: { id: string; kind: string; name: string; opens_on: string; closes_on: string }[] = await db.query(
    `SELECT id, kind, name, to_char(opens_on, 'YYYY-MM-DD') AS opens_on, to_char(closes_on, 'YYYY-MM-DD') AS closes_on FROM waves WHERE study_id = $1`,
    [study.id],
  );
  const wave = (kind: string) => waves.find((w) => w.kind === kind)!;
  const [baseline, outcome, followUp] = [wave('baseline'), wave('outcome'), wave('follow-up')];
  const versions: { version: number; created_at: Date }[] = await db.query(`SELECT version, created_at FROM plan_versions WHERE study_id = $1 ORDER BY version`, [study.id]);
  const [draw] = await db.query(`SELECT committed_at FROM draws WHERE study_id = $1`, [study.id]);
  const runs: { id: string; kind: string; state: string; queued_at: Date; started_at: Date; finished_at: Date; locked_at: Date | null; wave_id: string; measure_id: string; input_sheet_ids: string[] }[] =
    await db.query(
      `SELECT r.id, r.kind, r.state, r.queued_at, r.started_at, r.finished_at, r.locked_at, k.wave_id, k.measure_id, r.input_sheet_ids
         FROM runs r JOIN comparisons k ON k.id = r.comparison_id WHERE r.study_id = $1`,
      [study.id],
    );
  const locked = runs.filter((r) => r.state === 'locked');
  const sheets: { id: string; wave_id: string; measure_id: string; state: string; submitted_at: Date | null; reviewed_at: Date | null; locked: boolean }[] = await db.query(
    `SELECT id, wave_id, measure_id, state, submitted_at, reviewed_at, locked FROM score_sheets WHERE study_id = $1`,
    [study.id],
  );

  // Names and windows follow the school year the timeline chose for this day.
  const story = demoTimeline(today);
  expect([baseline.name, outcome.name, followUp.name]).toEqual([`Autumn ${story.year}`, `Spring ${story.year + 1}`, `Autumn ${story.year + 1}`]);

  // Sealed (and amended) before the draw, the draw before the baseline window, the windows in order.
  expect(versions.map((v) => v.version)).toEqual([1, 2]);
  expect(ms(study.created_at)).toBeLessThan(ms(versions[0].created_at));
  expect(ms(versions[0].created_at)).toBeLessThan(ms(versions[1].created_at));
  expect(ms(versions[1].created_at)).toBeLessThan(ms(draw.committed_at));
  expect(ms(draw.committed_at)).toBeLessThan(startOf(baseline.opens_on));
  expect(endOf(baseline.closes_on)).toBeLessThanOrEqual(startOf(outcome.opens_on));

  // Every sheet was submitted inside its wave's window and reviewed after that.
  const windowOf = new Map(waves.map((w) => [w.id, w]));
  for (const s of sheets.filter((x) => x.submitted_at)) {
    const w = windowOf.get(s.wave_id)!;
    expect(ms(s.submitted_at!)).toBeGreaterThanOrEqual(startOf(w.opens_on));
    expect(ms(s.submitted_at!)).toBeLessThan(endOf(w.closes_on));
    if (s.reviewed_at) expect(ms(s.reviewed_at)).toBeGreaterThan(ms(s.submitted_at!));
  }

  // Three locked results (one per pre-specified measure) after the outcome window, each after the acceptance of
  // every sheet of the waves and measure it reads: nothing there was open, returned or awaiting review at the lock.
  expect(locked).toHaveLength(3);
  for (const run of locked) {
    expect(ms(run.locked_at!)).toBeGreaterThan(endOf(outcome.closes_on));
    expect(ms(run.queued_at)).toBeLessThanOrEqual(ms(run.started_at));
    expect(ms(run.started_at)).toBeLessThanOrEqual(ms(run.finished_at));
    expect(ms(run.finished_at)).toBeLessThanOrEqual(ms(run.locked_at!));
    const read = sheets.filter((s) => s.measure_id === run.measure_id && [run.wave_id, baseline.id].includes(s.wave_id));
    expect(read).toHaveLength(48);
    expect(run.input_sheet_ids.length).toBeGreaterThanOrEqual(24);
    expect(run.input_sheet_ids.every((id) => read.some((s) => s.id === id && s.locked))).toBe(true);
    for (const s of read) {
      expect(s.state).toBe('accepted');
      expect(ms(s.reviewed_at!)).toBeLessThan(ms(run.started_at));
    }
  }
  const monitoring = runs.filter((r) => r.kind === 'monitoring');
  expect(monitoring).toHaveLength(1);
  expect(ms(monitoring[0].finished_at)).toBeLessThan(Math.min(...locked.map((r) => ms(r.locked_at!))));
  expect(ms(monitoring[0].started_at)).toBeGreaterThan(Math.max(...sheets.filter((s) => s.wave_id === outcome.id).map((s) => ms(s.reviewed_at!))));

  // The collection story lives in the follow-up wave, after the lock: returned, awaiting review, never entered.
  const unfinished = sheets.filter((s) => s.state !== 'accepted');
  expect(new Set(unfinished.map((s) => s.wave_id))).toEqual(new Set([followUp.id]));
  expect(unfinished.map((s) => s.state).sort()).toEqual(['open', 'open', 'open', 'returned', 'submitted']);
  const lastLock = Math.max(...locked.map((r) => ms(r.locked_at!)));
  expect(startOf(followUp.opens_on)).toBeGreaterThan(lastLock);

  // The audit trail tells the same order, and all of it lies before today.
  const audit: { action: string; at: Date }[] = await db.query(`SELECT action, at FROM audit_events WHERE study_id = $1 ORDER BY at`, [study.id]);
  const first = (action: string) => ms(audit.find((e) => e.action === action)!.at);
  const last = (action: string) => ms(audit.filter((e) => e.action === action).at(-1)!.at);
  expect(first('study.created')).toBeLessThan(first('plan.sealed'));
  expect(first('plan.sealed')).toBeLessThan(first('plan.amended'));
  expect(last('plan.amended')).toBeLessThan(first('site.enrolled'));
  expect(last('classroom.created')).toBeLessThan(first('draw.committed'));
  expect(last('draw.committed')).toBeLessThan(startOf(baseline.opens_on));
  expect(first('run.queued')).toBeGreaterThan(endOf(outcome.closes_on));
  expect(first('run.locked')).toBeGreaterThan(first('run.queued'));
  expect(audit.every((e) => ms(e.at) < ms(today))).toBe(true);
  const [latest] = await db.query(
    `SELECT greatest((SELECT max(at) FROM audit_events WHERE study_id = $1), (SELECT max(greatest(submitted_at, reviewed_at)) FROM score_sheets WHERE study_id = $1),
            (SELECT max(greatest(finished_at, locked_at)) FROM runs WHERE study_id = $1)) AS at`,
    [study.id],
  );
  expect(ms(latest.at)).toBeLessThan(ms(today));

  // The draft study is still being planned: its windows lie ahead.
  const draftWaves: { opens_on: string }[] = await db.query(
    `SELECT to_char(w.opens_on, 'YYYY-MM-DD') AS opens_on FROM waves w JOIN studies s ON s.id = w.study_id WHERE s.title = $1`,
    [DRAFT_STUDY_TITLE],
  );
  expect(draftWaves).toHaveLength(2);
  for (const w of draftWaves) expect(startOf(w.opens_on)).toBeGreaterThan(ms(today));
}

describe('the demo timeline', () => {
  it('picks the latest school year whose follow-up closed a week before today', () => {
    expect(demoTimeline(new Date('2026-12-02T12:00:00Z')).year).toBe(2025);
    expect(demoTimeline(new Date('2026-10-17T09:00:00Z')).year).toBe(2025);
    expect(demoTimeline(new Date('2026-10-16T09:00:00Z')).year).toBe(2024);
    expect(demoTimeline(new Date('2027-01-01T00:00:00Z')).schoolYear).toBe('2025–26');
  });

  it('when seeded on a fixed day (a week after the follow-up closed), then sealing, draw, windows, acceptance and lock come in that order', async () => {
    await expectOrderedDemo(new Date('2026-10-17T09:00:00Z'));
  }, 180_000);

  it('when seeded today, then the same order holds and everything lies in the past', async () => {
    await expectOrderedDemo(new Date());
  }, 180_000);
});

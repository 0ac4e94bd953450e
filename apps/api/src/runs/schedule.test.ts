import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, send, type StudySetup } from '../../test/fixtures.js';
import { createDataSource } from '../db/data-source.js';
import { startQueue } from '../jobs/queue.js';
import { startWorkers } from '../jobs/workers.js';
import { createLogger } from '../logger.js';
import { isDue, latestSlot, nextSlot, runMonitoringTick } from './schedule.js';

const logger = createLogger({ logLevel: 'silent' });
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

// Expected instants below are worked by hand from the cron fields and the zone's UTC offset.
describe('reading a comparison’s cron', () => {
  const nightly = { cron: '0 2 * * *', timeZone: 'America/Chicago', opensOn: '2026-03-02', closesOn: '2026-03-20', setAt: new Date('2026-02-01T00:00:00Z') };

  it('finds the latest slot at or before the tick, in the schedule’s time zone', () => {
    // 02:00 in Chicago on 10 March 2026 is 07:00 UTC (daylight time began on 8 March).
    expect(latestSlot(nightly.cron, nightly.timeZone, new Date('2026-03-10T07:00:30Z')).toISOString()).toBe('2026-03-10T07:00:00.000Z');
    expect(latestSlot(nightly.cron, nightly.timeZone, new Date('2026-03-10T07:00:00Z')).toISOString()).toBe('2026-03-10T07:00:00.000Z');
    expect(latestSlot(nightly.cron, nightly.timeZone, new Date('2026-03-10T06:59:59Z')).toISOString()).toBe('2026-03-09T07:00:00.000Z');
  });

  it('calls a slot due only inside the wave, after the schedule was set and within the catch-up hour', () => {
    const slot = new Date('2026-03-10T07:00:00Z');
    expect(isDue(nightly, slot, new Date('2026-03-10T07:00:30Z'))).toBe(true);
    expect(isDue(nightly, slot, new Date('2026-03-10T07:59:00Z'))).toBe(true);
    expect(isDue(nightly, slot, new Date('2026-03-10T08:01:00Z'))).toBe(false);
    expect(isDue({ ...nightly, setAt: new Date('2026-03-10T07:00:01Z') }, slot, new Date('2026-03-10T07:00:30Z'))).toBe(false);
    // 1 March, 02:00 in Chicago (08:00 UTC, standard time): the day before the wave opens.
    expect(isDue(nightly, new Date('2026-03-01T08:00:00Z'), new Date('2026-03-01T08:00:30Z'))).toBe(false);
  });

  it('gives the next slot from the wave’s first day, and none once the wave is over', () => {
    expect(nextSlot(nightly, new Date('2026-02-15T12:00:00Z'))?.toISOString()).toBe('2026-03-02T08:00:00.000Z');
    expect(nextSlot(nightly, new Date('2026-03-10T07:00:00Z'))?.toISOString()).toBe('2026-03-11T07:00:00.000Z');
    expect(nextSlot(nightly, new Date('2026-03-20T07:00:00Z'))).toBeNull();
    const everyMinute = { ...nightly, cron: '* * * * *', timeZone: 'UTC' };
    expect(nextSlot(everyMinute, new Date('2026-02-15T12:00:00Z'))?.toISOString()).toBe('2026-03-02T00:00:00.000Z');
  });
});

let t: TestApp;
let s: StudySetup;
let comparisonId: string;
let waveOpensOn: string;

async function waitFor(runId: string, states = ['finished', 'failed']) {
  for (let i = 0; i < 150; i++) {
    const res = await s.lead.agent.get(`/api/runs/${runId}`);
    if (states.includes(res.body.state)) return res.body;
    await sleep(200);
  }
  throw new Error(`run ${runId} did not finish`);
}

beforeAll(async () => {
  t = await startTestApp({ workers: true });
  s = await createStudy(t.app);
  const { classrooms } = await enrolClassrooms(s, 2, 2);
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'schedule-test', commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
  for (const [k, c] of classrooms.entries()) {
    // Submitted, not accepted: a monitoring run reads them, a confirmatory run would not.
    await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: s.measureId }, Array.from({ length: 8 }, (_, i) => 50 + ((i * 7 + k * 5) % 23)), `S${k}`, 'submitted');
  }
  const list = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
  comparisonId = list[0].id;
  [{ opens_on: waveOpensOn }] = await t.db.query(`SELECT opens_on::text FROM waves WHERE id = $1`, [s.outcomeId]);
});
afterAll(() => t.close());

describe('scheduled monitoring runs', () => {
  it('refuses a cron expression that cannot be read, naming the field', async () => {
    const res = await s.lead.agent.put(`/api/comparisons/${comparisonId}/schedule`).set('x-csrf-token', s.lead.csrf).send({ scheduleCron: '61 2 * * *' });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues[0].path).toBe('scheduleCron');
  });

  it('sets a nightly schedule, audited, and shows its next run on the wave’s first day', async () => {
    const k = await send(s.lead, 'put', `/api/comparisons/${comparisonId}/schedule`, { scheduleCron: '0 2 * * *', scheduleTimezone: 'UTC' }, 200);
    expect(k).toMatchObject({ scheduleCron: '0 2 * * *', scheduleTimezone: 'UTC', nextMonitoringRunAt: `${waveOpensOn}T02:00:00.000Z` });
    const [audit] = await t.db.query(`SELECT actor_id, before, after FROM audit_events WHERE action = 'comparison.schedule_set' AND entity_id = $1`, [comparisonId]);
    expect(audit).toMatchObject({ actor_id: s.lead.userId, before: { scheduleCron: null }, after: { scheduleCron: '0 2 * * *' } });
  });

  it('queues nothing for a tick while the wave is not open', async () => {
    expect((await runMonitoringTick({ db: t.db, jobs: t.jobs, logger }, new Date())).queued).toBe(0);
  });

  it('when two processes tick at the same due moment, then exactly one monitoring run is queued and computed', async () => {
    const tickAt = new Date(`${waveOpensOn}T02:00:20Z`);
    const otherDb = createDataSource(t.databaseUrl);
    await otherDb.initialize();
    const otherQueue = await startQueue(t.databaseUrl, logger);
    try {
      const [a, b] = await Promise.all([
        runMonitoringTick({ db: t.db, jobs: t.jobs, logger }, tickAt),
        runMonitoringTick({ db: otherDb, jobs: otherQueue, logger }, tickAt),
      ]);
      expect(a.queued + b.queued).toBe(1);
      // A later tick in the same slot's catch-up hour finds the slot taken.
      expect((await runMonitoringTick({ db: otherDb, jobs: otherQueue, logger }, new Date(tickAt.getTime() + 30 * 60_000))).queued).toBe(0);
    } finally {
      await otherQueue.stop();
      await otherDb.destroy();
    }
    const runs = await t.db.query(`SELECT id, kind, scheduled_for FROM runs WHERE comparison_id = $1 AND scheduled_for IS NOT NULL`, [comparisonId]);
    expect(runs).toHaveLength(1);
    expect(runs[0].kind).toBe('monitoring');
    expect(new Date(runs[0].scheduled_for).toISOString()).toBe(`${waveOpensOn}T02:00:00.000Z`);
    const jobs = await t.db.query(`SELECT id FROM pgboss.job WHERE name = 'comparison-run' AND data->>'runId' = $1`, [runs[0].id]);
    expect(jobs).toHaveLength(1);
    const run = await waitFor(runs[0].id);
    expect(run).toMatchObject({ state: 'finished', kind: 'monitoring', scheduledFor: `${waveOpensOn}T02:00:00.000Z` });
    expect(run.results.cautions[0]).toMatch(/^Interim — not confirmatory/);
    const [audit] = await t.db.query(`SELECT actor_id, after FROM audit_events WHERE action = 'run.queued' AND entity_id = $1`, [runs[0].id]);
    expect(audit).toMatchObject({ actor_id: null, after: { kind: 'monitoring', scheduledFor: `${waveOpensOn}T02:00:00.000Z` } });
  });

  it('when the schedule is removed, then ticks queue nothing and no next run is shown', async () => {
    const k = await send(s.lead, 'put', `/api/comparisons/${comparisonId}/schedule`, { scheduleCron: null }, 200);
    expect(k).toMatchObject({ scheduleCron: null, nextMonitoringRunAt: null });
    const nextNight = new Date(new Date(`${waveOpensOn}T02:00:20Z`).getTime() + 86_400_000);
    expect((await runMonitoringTick({ db: t.db, jobs: t.jobs, logger }, nextNight)).queued).toBe(0);
  });

  it('is not for reviewers: only the research lead sets a schedule', async () => {
    const reviewer = await signIn(t.app, 'reviewer@evenhand.test');
    const res = await reviewer.agent.put(`/api/comparisons/${comparisonId}/schedule`).set('x-csrf-token', reviewer.csrf).send({ scheduleCron: '0 2 * * *' });
    expect(res.status).toBe(403);
  });
});

describe('scheduled monitoring runs through pg-boss', () => {
  it('with two queue instances ticking every second, each due slot gets one run, which a worker computes', async () => {
    // The outcome wave is open today, and the schedule has been set for a while, so this minute's slot is due.
    await t.db.query(`UPDATE waves SET opens_on = current_date - 1, closes_on = current_date + 1 WHERE id = $1`, [s.outcomeId]);
    await send(s.lead, 'put', `/api/comparisons/${comparisonId}/schedule`, { scheduleCron: '* * * * *', scheduleTimezone: 'UTC' }, 200);
    await t.db.query(`UPDATE comparisons SET schedule_set_at = now() - interval '5 minutes' WHERE id = $1`, [comparisonId]);
    const timing = { cronMonitorIntervalSeconds: 1, cronWorkerIntervalSeconds: 1 };
    const queues = [await startQueue(t.databaseUrl, logger, timing), await startQueue(t.databaseUrl, logger, timing)];
    const started = Date.now();
    try {
      for (const q of queues) await startWorkers(q, t.db, logger, 0.5);
      let runs: { id: string; scheduled_for: Date }[] = [];
      for (let i = 0; i < 100 && runs.length === 0; i++) {
        await sleep(200);
        runs = await t.db.query(`SELECT id, scheduled_for FROM runs WHERE comparison_id = $1 AND scheduled_for BETWEEN now() - interval '2 minutes' AND now()`, [comparisonId]);
      }
      expect(runs.length).toBeGreaterThan(0);
      expect(await waitFor(runs[0].id)).toMatchObject({ state: 'finished', kind: 'monitoring' });
      // Let both instances tick a few more times within the minute.
      await sleep(3_000);
      runs = await t.db.query(`SELECT id, scheduled_for FROM runs WHERE comparison_id = $1 AND scheduled_for BETWEEN now() - interval '2 minutes' AND now()`, [comparisonId]);
      const slots = new Set(runs.map((r) => new Date(r.scheduled_for).toISOString()));
      expect(slots.size).toBe(runs.length);
      const minutesSpanned = Math.floor(Date.now() / 60_000) - Math.floor(started / 60_000) + 1;
      expect(runs.length).toBeLessThanOrEqual(minutesSpanned);
      const jobs = await t.db.query(`SELECT data->>'runId' AS run FROM pgboss.job WHERE name = 'comparison-run' AND data->>'runId' = ANY($1)`, [runs.map((r) => r.id)]);
      expect(jobs.map((j: { run: string }) => j.run).sort()).toEqual(runs.map((r) => r.id).sort());
      const ticks = await t.db.query(`SELECT count(*)::int AS n FROM pgboss.job WHERE name = 'monitoring-tick'`);
      expect(ticks[0].n).toBeGreaterThan(0);
    } finally {
      for (const q of queues) await q.stop();
    }
  });
});

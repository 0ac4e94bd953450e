import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decidingTest, type RunResults } from '@evenhand/entities';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, send, type StudySetup } from '../../test/fixtures.js';
import { mailTo, uniqueAddress, type CaughtMail } from '../../test/mail.js';
import { startQueue } from '../jobs/queue.js';
import { startWorkers } from '../jobs/workers.js';
import { createLogger } from '../logger.js';
import { createMailer, type Mailer } from '../mail/mailer.js';
import { dueWeeklySlot, runDigestTick } from './schedules.js';
import { createLockDigests } from './service.js';
import { formatNumber, formatSigned, suppressCounts } from './wording.js';

const logger = createLogger({ logLevel: 'silent' });
let t: TestApp;
let s: StudySetup;
let mailer: Mailer;
let runId: string;
let results: RunResults;
const sites: { id: string; name: string; principal: string; session?: SignedIn }[] = [];

/** Writes scores straight into a sheet (the outcome wave of the fixture opens later) and accepts it. */
async function fill(classroomId: string, waveId: string, scores: number[], codePrefix: string) {
  const [sheet] = await t.db.query(`SELECT id, study_id FROM score_sheets WHERE classroom_id = $1 AND wave_id = $2 AND measure_id = $3`, [classroomId, waveId, s.measureId]);
  const codes = scores.map((_, i) => `${codePrefix}-${i}`);
  await t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) SELECT $1, unnest($2::varchar[]), $3 ON CONFLICT DO NOTHING`, [sheet.study_id, codes, classroomId]);
  await t.db.query(
    `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score)
     SELECT $1, $2, $3, $4, $5, c, v FROM unnest($6::varchar[], $7::numeric[]) AS t(c, v)`,
    [sheet.id, sheet.study_id, classroomId, waveId, s.measureId, codes, scores],
  );
  await t.db.query(`UPDATE score_sheets SET state = 'accepted' WHERE id = $1`, [sheet.id]);
}

async function principalFor(siteId: string, label: string) {
  const email = uniqueAddress(label);
  await send(s.coordinator, 'patch', `/api/sites/${siteId}`, { principal: { email, name: `Principal ${label}` } }, 200);
  await t.db.query(`UPDATE users SET password_hash = (SELECT password_hash FROM users WHERE email = 'principal1@evenhand.test') WHERE email = $1`, [email]);
  return email;
}

async function digestsOf(email: string, subject: RegExp, count = 1): Promise<CaughtMail[]> {
  const until = Date.now() + 15_000;
  for (;;) {
    const found = (await mailTo(email)).filter((m) => subject.test(m.subject));
    if (found.length >= count || Date.now() > until) return found;
    await new Promise((r) => setTimeout(r, 150));
  }
}

async function waitForOutbox(studyId: string) {
  for (let i = 0; i < 150; i++) {
    const [{ pending }] = await t.db.query(`SELECT count(*)::int AS pending FROM digests WHERE study_id = $1 AND state IN ('queued', 'retrying')`, [studyId]);
    if (pending === 0) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error('the outbox did not drain');
}

/** The lock digest's text for a school, read back from the outbox. */
async function lockText(siteId: string): Promise<string> {
  const [row] = await t.db.query(`SELECT text FROM digests WHERE site_id = $1 AND kind = 'lock'`, [siteId]);
  return row.text;
}

const ctx = () => ({ db: t.db, config: t.config, jobs: t.jobs, logger });

beforeAll(async () => {
  t = await startTestApp({ mail: false }); // its own sender, below
  mailer = createMailer(t.config);
  await startWorkers(t.jobs, t.db, logger, 0.5, { mailer, config: t.config, schedule: false, delivery: { maxAttempts: 3, baseDelaySeconds: 1, maxDelaySeconds: 2 } });
  s = await createStudy(t.app);
  const { classrooms } = await enrolClassrooms(s, 2, 4);
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'digests-test', commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
  const arms: { id: string; arm: string; site_id: string; site_name: string }[] = await t.db.query(
    `SELECT c.id, c.arm, c.site_id, x.name AS site_name FROM classrooms c JOIN sites x ON x.id = c.site_id WHERE c.study_id = $1 ORDER BY x.name, c.name`,
    [s.studyId],
  );
  const siteIds = [...new Set(classrooms.map((c) => c.siteId))];
  for (const [i, id] of siteIds.entries()) {
    sites.push({ id, name: arms.find((a) => a.site_id === id)!.site_name, principal: await principalFor(id, i === 0 ? 'small' : 'large') });
  }
  // The first school has 3 students in each intervention classroom (6 in that arm) and 17 in each comparison one (34);
  // the second has 12 in every classroom.
  let k = 0;
  for (const c of arms) {
    const size = c.site_id === sites[0].id ? (c.arm === 'intervention' ? 3 : 17) : 12;
    const pre = Array.from({ length: size }, (_, i) => 60 + ((i * 37 + k * 11) % 41));
    const post = pre.map((p, i) => Math.round((p * 0.8 + 25 + (c.arm === 'intervention' ? 7 : 0) + ((i * 13 + k * 7) % 17) - 8) * 10) / 10);
    await fill(c.id, s.baselineId, pre, `D${k}`);
    await fill(c.id, s.outcomeId, post, `D${k}`);
    k++;
  }
  const [comparison] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
  const queued = await send(s.lead, 'post', `/api/comparisons/${comparison.id}/runs`, { kind: 'confirmatory' }, 202);
  runId = queued.run.id;
  for (let i = 0; i < 100; i++) {
    const run = (await s.lead.agent.get(`/api/runs/${runId}`)).body;
    if (run.state === 'finished') {
      results = run.results;
      break;
    }
    if (run.state === 'failed') throw new Error(run.error);
    await new Promise((r) => setTimeout(r, 200));
  }
  if (!results) throw new Error('the run did not finish');
  for (const site of sites) site.session = await signIn(t.app, site.principal);
});

afterAll(async () => {
  mailer?.close();
  await t.close();
});

describe('small-cell suppression', () => {
  it('hides every count under 10, and one more when a single hidden count could be worked out from the total', () => {
    expect(suppressCounts([6, 34])).toEqual({ cells: [{ value: null, suppressed: true }, { value: null, suppressed: true }], total: { value: 40, suppressed: false }, hidden: true });
    expect(suppressCounts([24, 24]).cells.map((c) => c.value)).toEqual([24, 24]);
    // Two hidden cells already protect each other; the largest stays.
    expect(suppressCounts([4, 5, 30]).cells.map((c) => c.value)).toEqual([null, null, 30]);
    expect(suppressCounts([40, 3, 12]).cells.map((c) => c.value)).toEqual([40, null, null]);
    expect(suppressCounts([3, 4]).total).toEqual({ value: null, suppressed: true });
  });
});

/** The locked result's evidence wording as the report shows it (the research lead's evidence answer). */
async function verdictWording(): Promise<string> {
  const evidence = (await s.lead.agent.get(`/api/studies/${s.studyId}/evidence`)).body;
  return evidence.comparisons.find((c: { runId: string }) => c.runId === runId).verdict.wording;
}

describe('digests on lock', () => {
  let mails: Record<string, CaughtMail>;

  it('when a confirmatory run is locked, then each principal of the study gets exactly one digest, with the result in plain words', async () => {
    await send(s.lead, 'post', `/api/runs/${runId}/lock`, {}, 200);
    const rows: { recipient_email: string; kind: string; run_id: string }[] = await t.db.query(`SELECT recipient_email, kind, run_id FROM digests WHERE study_id = $1`, [s.studyId]);
    expect(rows.map((r) => r.recipient_email).sort()).toEqual(sites.map((x) => x.principal).sort());
    expect(rows.every((r) => r.kind === 'lock' && r.run_id === runId)).toBe(true);
    await waitForOutbox(s.studyId);
    mails = {};
    for (const site of sites) {
      const found = await digestsOf(site.principal, /^The result is locked:/);
      expect(found).toHaveLength(1);
      expect(found[0].subject).toBe(`The result is locked: Paired reading in grade 4 (${site.name})`);
      mails[site.id] = found[0];
    }
    const g = formatNumber(results.effectSize.g, 2);
    const ii = formatSigned(results.effectSize.improvementIndex, 0);
    for (const mail of Object.values(mails)) {
      expect(mail.text).toContain(`Hedges’ g = ${g} (95% interval ${formatNumber(results.effectSize.ci[0], 2)} to ${formatNumber(results.effectSize.ci[1], 2)})`);
      expect(mail.text).toContain(`an improvement index of ${ii}`);
      expect(mail.text).toMatch(decidingTest(results).significant ? /It meets the test registered in the plan/ : /It does not meet the test registered in the plan/);
      expect(mail.text).toMatch(/not for evaluating teachers or for placing students/);
      expect(mail.text).toMatch(/data-privacy rules and its research review board/);
      expect(mail.html).toContain(`${g} (95% interval`);
      expect(mail.html).not.toMatch(/<img/i);
      expect(mail.text).toContain(`${t.config.appUrl}/my-school`);
    }
    // The evidence verdict's final wording, stored at the lock: the report's headline for this result, one sentence, no counts.
    const wording = await verdictWording();
    expect(wording).toMatch(/^Evidence preview, not a review \(the evidence reviewers decide\): this comparison [^.]+\.$/);
    expect(wording).not.toMatch(/\d/);
    for (const mail of Object.values(mails)) {
      expect(mail.text).toContain(wording);
      expect(mail.html).toContain(wording);
    }
    const status = await t.db.query(`SELECT state, attempts, sent_at FROM digests WHERE study_id = $1`, [s.studyId]);
    expect(status.every((d: { state: string; attempts: number }) => d.state === 'sent' && d.attempts === 1)).toBe(true);
  });

  it('when a school has fewer than 10 students in an arm, then its figures read "fewer than 10 students" and the hidden numbers appear nowhere', async () => {
    const small = mails[sites[0].id];
    expect(small.text).toContain('Intervention classrooms · Classrooms: 2 · Students: fewer than 10 students');
    // Complementary suppression: the other arm (34) is hidden too, and only the total (40) is shown.
    expect(small.text).toContain('Comparison classrooms · Classrooms: 2 · Students: fewer than 10 students');
    expect(small.text).toContain('Intervention classrooms · Students analysed: fewer than 10 students · Average score: not shown');
    expect(small.text).toContain('Comparison classrooms · Students analysed: fewer than 10 students · Average score: not shown');
    expect(small.text).toContain('4 classrooms and 40 students with scores so far');
    for (const body of [small.text, small.html]) {
      for (const n of [6, 34]) {
        expect(body).not.toMatch(new RegExp(`(?<![\\d.])${n} students|Students: ${n}\\b|analysed: ${n}\\b|>\\s*${n}\\s*<`));
      }
    }
    const large = mails[sites[1].id];
    expect(large.text).toContain('Intervention classrooms · Classrooms: 2 · Students: 24');
    expect(large.text).not.toContain('fewer than 10 students');
  });

  it('a principal never receives another school’s figures', async () => {
    const [a, b] = sites;
    expect(mails[a.id].text).not.toContain(b.name);
    expect(mails[a.id].html).not.toContain(b.name);
    expect(mails[b.id].text).not.toContain(a.name);
    // The school's own lines carry its own figures; the small school's carry none at all.
    const own = results.sites.find((x) => x.siteId === b.id)!;
    expect(mails[b.id].text).toContain(`Intervention classrooms · Students analysed: ${own.n1} · Average score: ${formatNumber(own.mean1, 1)}`);
    expect(mails[b.id].text).toContain(`Comparison classrooms · Students analysed: ${own.n2} · Average score: ${formatNumber(own.mean2, 1)}`);
    expect(mails[a.id].text).not.toMatch(/Average score: \d/);
    // Neither the outbox nor the previews are open to principals.
    const digest = (await s.lead.agent.get(`/api/studies/${s.studyId}/digests`)).body.items[0];
    expect((await a.session!.agent.get(`/api/digests/${digest.id}`)).status).toBe(403);
    expect((await a.session!.agent.get(`/api/studies/${s.studyId}/digests`)).status).toBe(403);
  });

  it('carries a Message-ID made from the digest id and a one-click unsubscribe header', async () => {
    const mail = mails[sites[0].id] as CaughtMail & { headers: Record<string, string> };
    const [row] = await t.db.query(`SELECT id FROM digests WHERE recipient_email = $1 AND kind = 'lock'`, [sites[0].principal]);
    expect(mail.headers['message-id']).toBe(`<digest-${row.id}@evenhand.test>`);
    const source = await (await fetch(`${process.env.MAILDEV_URL ?? 'http://127.0.0.1:1080'}/api/email/${mail.id}/source`)).text();
    expect(source).toMatch(/^List-Unsubscribe:\s+<http:\/\/127\.0\.0\.1:3999\/api\/digest-preferences\/one-click\?token=[^>]+>\r?$/m);
    expect(source).toMatch(/^List-Unsubscribe-Post: List-Unsubscribe=One-Click\r?$/m);
  });

  it('when the same lock is processed again, then no second digest is made', async () => {
    const again = await t.db.transaction((manager) => createLockDigests(manager, ctx(), s.studyId, runId));
    expect(again).toEqual({ queued: 0, skipped: 0 });
    const [{ n }] = await t.db.query(`SELECT count(*)::int AS n FROM digests WHERE study_id = $1`, [s.studyId]);
    expect(n).toBe(2);
    await expect(t.db.query(`UPDATE digests SET state = 'queued', sent_at = NULL, next_attempt_at = now() WHERE study_id = $1`, [s.studyId])).rejects.toThrow(/is sent and cannot change/);
  });
});

describe('lock digests gathered while they wait', () => {
  it('when a lock digest waits unsent, then its message may be rewritten to name later locks; once a worker tried it, never', async () => {
    const attempt = (attempts: number) =>
      t.db.transaction(async (manager) => {
        const [row] = await manager.query(
          `INSERT INTO digests (study_id, site_id, recipient_id, recipient_email, kind, unique_key, run_id, subject, html, text, attempts)
           SELECT $1, $2, u.id, u.email, 'lock', $3, $4, 'The result is locked', '<p>one</p>', 'one', $5 FROM users u WHERE u.email = $6 RETURNING id`,
          [s.studyId, sites[0].id, `gather-test:${attempts}`, runId, attempts, sites[0].principal],
        );
        await manager.query(`UPDATE digests SET subject = '2 results are locked', html = '<p>two</p>', text = 'two' WHERE id = $1`, [row.id]);
        throw new Error('rolled back');
      });
    await expect(attempt(0)).rejects.toThrow('rolled back');
    await expect(attempt(1)).rejects.toThrow(/the message of digest .* cannot change/);
  });
});

describe('My school', () => {
  it('shows a principal their own school only, with the same facts and suppression as the digest', async () => {
    const res = await sites[0].session!.agent.get('/api/my-school');
    expect(res.status).toBe(200);
    expect(res.body.items).toHaveLength(1);
    const facts = res.body.items[0];
    expect(facts.site).toEqual({ id: sites[0].id, name: sites[0].name });
    expect(facts.participation.arms.map((a: { students: unknown }) => a.students)).toEqual([
      { value: null, suppressed: true },
      { value: null, suppressed: true },
    ]);
    expect(facts.participation.students).toEqual({ value: 40, suppressed: false });
    expect(facts.results[0].district.g).toBe(results.effectSize.g);
    expect(facts.results[0].site.arms.every((a: { mean: number | null }) => a.mean === null)).toBe(true);
    const text = await lockText(sites[0].id);
    for (const sentence of facts.results[0].sentences) expect(text).toContain(sentence);
    expect(facts.results[0].evidence).toBe(await verdictWording());
    expect(JSON.stringify(res.body)).not.toContain(sites[1].name);
    expect(res.body.digests.frequency).toBe('weekly');
  });

  it('is for principals only', async () => {
    expect((await s.lead.agent.get('/api/my-school')).status).toBe(403);
  });
});

describe('outbox', () => {
  it('lists the study’s digests with state, attempts, recipient, school and kind, and previews one as sent', async () => {
    const list = (await s.coordinator.agent.get(`/api/studies/${s.studyId}/digests?limit=1`)).body;
    expect(list.total).toBe(2);
    expect(list.items).toHaveLength(1);
    expect(list.items[0]).toMatchObject({ kind: 'lock', state: 'sent', attempts: 1, lastError: null });
    expect(sites.map((x) => x.principal)).toContain(list.items[0].recipient.email);
    const detail = (await s.coordinator.agent.get(`/api/digests/${list.items[0].id}`)).body;
    expect(detail.html).toMatch(/^<!doctype html>/i);
    expect(detail.html).toContain(list.items[0].siteName);
    expect(detail.text).toContain('Hedges’ g');
  });

  it('sends a digest now to every principal (202 with the count), and two workers deliver each exactly once', async () => {
    const second = await startQueue(t.databaseUrl, logger);
    const secondMailer = createMailer(t.config);
    await startWorkers(second, t.db, logger, 0.5, { mailer: secondMailer, config: t.config, schedule: false });
    try {
      const before = await Promise.all(sites.map(async (x) => (await digestsOf(x.principal, /^Update on/, 0)).length));
      for (let i = 0; i < 3; i++) {
        const res = await s.coordinator.agent.post(`/api/studies/${s.studyId}/digests/send`).set('x-csrf-token', s.coordinator.csrf);
        expect(res.status).toBe(202);
        expect(res.body).toEqual({ queued: 2, skipped: 0 });
      }
      await waitForOutbox(s.studyId);
      for (const [i, x] of sites.entries()) {
        const got = await digestsOf(x.principal, /^Update on/, before[i] + 3);
        expect(got).toHaveLength(before[i] + 3);
        expect(new Set(got.map((m) => (m as CaughtMail & { headers: Record<string, string> }).headers['message-id'])).size).toBe(got.length);
      }
      const states = await t.db.query(`SELECT state, attempts FROM digests WHERE study_id = $1 AND kind = 'manual'`, [s.studyId]);
      expect(states).toHaveLength(6);
      expect(states.every((d: { state: string; attempts: number }) => d.state === 'sent' && d.attempts === 1)).toBe(true);
      const [audit] = await t.db.query(`SELECT after FROM audit_events WHERE action = 'digests.sent' AND study_id = $1 LIMIT 1`, [s.studyId]);
      expect(audit.after).toEqual({ queued: 2, skipped: 0 });
    } finally {
      await second.stop();
      secondMailer.close();
    }
  });
});

describe('weekly digests and preferences', () => {
  const today = new Date();
  const isoWeekday = ((today.getUTCDay() + 6) % 7) + 1;

  it('works out when this week’s digest is due, in the study’s time zone, for a day after the chosen hour', () => {
    const monday7 = { weekday: 1, hour: 7, timezone: 'UTC' };
    expect(dueWeeklySlot(new Date('2026-11-30T06:59:00Z'), monday7)).toBeNull();
    expect(dueWeeklySlot(new Date('2026-11-30T07:00:00Z'), monday7)).toBe('2026-11-30');
    expect(dueWeeklySlot(new Date('2026-12-01T06:30:00Z'), monday7)).toBe('2026-11-30');
    expect(dueWeeklySlot(new Date('2026-12-01T07:00:00Z'), monday7)).toBeNull();
    // 13:00 UTC on a Monday is 07:00 in Chicago (CST).
    expect(dueWeeklySlot(new Date('2026-11-30T13:00:00Z'), { ...monday7, timezone: 'America/Chicago' })).toBe('2026-11-30');
    expect(dueWeeklySlot(new Date('2026-11-30T12:00:00Z'), { ...monday7, timezone: 'America/Chicago' })).toBeNull();
  });

  it('keeps the schedule per study: default, change (audited) and validation', async () => {
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}/digest-schedule`)).body).toEqual({ weeklyEnabled: true, weekday: 1, hour: 7, timezone: 'UTC' });
    const bad = await s.coordinator.agent.put(`/api/studies/${s.studyId}/digest-schedule`).set('x-csrf-token', s.coordinator.csrf).send({ weeklyEnabled: true, weekday: 8, hour: 7, timezone: 'Mars/Olympus' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.issues.map((i: { path: string }) => i.path).sort()).toEqual(['timezone', 'weekday']);
    const saved = await send(s.coordinator, 'put', `/api/studies/${s.studyId}/digest-schedule`, { weeklyEnabled: true, weekday: isoWeekday, hour: 0, timezone: 'UTC' }, 200);
    expect(saved.weekday).toBe(isoWeekday);
    const [audit] = await t.db.query(`SELECT before, after FROM audit_events WHERE action = 'digest_schedule.changed' AND study_id = $1`, [s.studyId]);
    expect(audit.before.weekday).toBe(1);
    expect(audit.after.weekday).toBe(isoWeekday);
  });

  it('makes one weekly digest per principal while a wave is open, once per week however often the tick runs', async () => {
    const first = await runDigestTick(ctx(), today);
    expect(first.weekly).toBe(2);
    expect((await runDigestTick(ctx(), today)).weekly).toBe(0);
    await waitForOutbox(s.studyId);
    for (const x of sites) expect(await digestsOf(x.principal, /^This week in/)).toHaveLength(1);
  });

  it('when the weekly digest is turned off, then the tick makes none', async () => {
    await send(s.coordinator, 'put', `/api/studies/${s.studyId}/digest-schedule`, { weeklyEnabled: false, weekday: isoWeekday, hour: 0, timezone: 'UTC' }, 200);
    expect((await runDigestTick(ctx(), new Date(today.getTime() + 7 * 86_400_000))).weekly).toBe(0);
    await send(s.coordinator, 'put', `/api/studies/${s.studyId}/digest-schedule`, { weeklyEnabled: true, weekday: isoWeekday, hour: 0, timezone: 'UTC' }, 200);
  });

  it('unsubscribes without signing in through the e-mail’s link, audits it, and stops the next weekly digest', async () => {
    const [small, large] = sites;
    const text = await lockText(small.id);
    const token = decodeURIComponent(text.match(/email-preferences\?token=([^&\s]+)&frequency=none/)![1]);
    const anonymous = request(t.app);
    expect((await anonymous.get('/api/digest-preferences').query({ token })).body).toEqual({ name: 'Principal small', frequency: 'weekly' });
    const tampered = await anonymous.put('/api/digest-preferences').send({ token: `${token.slice(0, -2)}xx`, frequency: 'none' });
    expect(tampered.status).toBe(400);
    const done = await anonymous.put('/api/digest-preferences').send({ token, frequency: 'none' });
    expect(done.status).toBe(200);
    expect(done.body.frequency).toBe('none');
    const [user] = await t.db.query(`SELECT id FROM users WHERE email = $1`, [small.principal]);
    const [audit] = await t.db.query(`SELECT actor_id, before, after FROM audit_events WHERE action = 'digest.preference_changed' AND entity_id = $1`, [user.id]);
    expect(audit).toMatchObject({ actor_id: user.id, before: { frequency: 'weekly' }, after: { frequency: 'none', via: 'preferences page' } });

    const nextWeek = new Date(today.getTime() + 7 * 86_400_000);
    expect((await runDigestTick(ctx(), nextWeek)).weekly).toBe(1);
    const weekly = await t.db.query(`SELECT recipient_email FROM digests WHERE study_id = $1 AND kind = 'weekly' AND unique_key LIKE $2`, [s.studyId, `%${nextWeek.toISOString().slice(0, 10)}%`]);
    expect(weekly.map((w: { recipient_email: string }) => w.recipient_email)).toEqual([large.principal]);
    // "Send now" respects the choice too.
    const now = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/digests/send`, {}, 202);
    expect(now).toEqual({ queued: 1, skipped: 1 });
  });

  it('"only when locked" skips the weekly digest, and the mail program’s one-click unsubscribe stops all', async () => {
    const large = sites[1];
    const token = (await large.session!.agent.get('/api/my-school')).body.digests.preferencesToken;
    await request(t.app).put('/api/digest-preferences').send({ token, frequency: 'locked' }).expect(200);
    expect((await runDigestTick(ctx(), new Date(today.getTime() + 14 * 86_400_000))).weekly).toBe(0);
    const res = await request(t.app).post(`/api/digest-preferences/one-click?token=${encodeURIComponent(token)}`).type('form').send('List-Unsubscribe=One-Click');
    expect(res.status).toBe(200);
    expect(res.body.frequency).toBe('none');
    expect((await large.session!.agent.get('/api/my-school')).body.digests.frequency).toBe('none');
  });
});

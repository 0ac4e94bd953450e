import type { EntityManager } from 'typeorm';

/** A wave's name and window (calendar dates, YYYY-MM-DD). */
export interface DemoWindow {
  name: string;
  opensOn: string;
  closesOn: string;
}

/**
 * When each step of the demo study happened, computed from the day the seed runs. The study follows one school year:
 * planned in spring, sealed before the summer, drawn before the autumn pretest, outcome in spring, locked in June,
 * then a follow-up the next autumn. It is the latest school year whose follow-up window closed at least a week
 * before today, so every step lies in the past, in that order, and the waves keep the season names a district uses.
 */
export interface DemoTimeline {
  today: Date;
  /** First calendar year of the study's school year (2025 for 2025–26). */
  year: number;
  /** "2025–26". */
  schoolYear: string;
  accounts: Date;
  studyCreated: Date;
  planDrafted: Date;
  planSealed: Date;
  planAmended: Date;
  enrolled: Date;
  drawn: Date;
  baseline: DemoWindow;
  outcome: DemoWindow;
  followUp: DemoWindow;
  monitoringRun: Date;
  locked: Date;
}

const day = 86_400_000;
const utc = (y: number, m: number, d: number, h = 9) => new Date(Date.UTC(y, m - 1, d, h));
const iso = (d: Date) => d.toISOString().slice(0, 10);
/** Calendar date (UTC) of `date` plus `days`. */
export const addDays = (date: Date | string, days: number) => new Date(new Date(date).getTime() + days * day);
/** The calendar date `days` after `today`, as YYYY-MM-DD. */
export const isoDaysFrom = (today: Date, days: number) => iso(addDays(today, days));

const window = (name: string, y: number, opens: [number, number], closes: [number, number]): DemoWindow => ({
  name,
  opensOn: iso(utc(y, ...opens)),
  closesOn: iso(utc(y, ...closes)),
});

/** Sheets of a wave are reviewed within this many days of its close. */
export const REVIEW_DAYS = 4;

export function demoTimeline(today: Date): DemoTimeline {
  const followUpCloses = (y: number) => utc(y + 1, 10, 10);
  let year = today.getUTCFullYear();
  while (followUpCloses(year).getTime() + 7 * day > today.getTime()) year--;
  const next = year + 1;
  return {
    today,
    year,
    schoolYear: `${year}–${String(next % 100).padStart(2, '0')}`,
    accounts: utc(year, 4, 20),
    studyCreated: utc(year, 5, 4),
    planDrafted: utc(year, 5, 18),
    planSealed: utc(year, 6, 1),
    planAmended: utc(year, 6, 15),
    enrolled: utc(year, 8, 24),
    drawn: utc(year, 9, 1),
    baseline: window(`Autumn ${year}`, year, [9, 15], [10, 10]),
    outcome: window(`Spring ${next}`, next, [4, 27], [5, 22]),
    followUp: window(`Autumn ${next}`, next, [9, 15], [10, 10]),
    monitoringRun: utc(next, 6, 1),
    locked: utc(next, 6, 8),
  };
}

/** A moment of the seed's own run (the database clock) and the moment of the demo's story it stands for. */
export interface TimelineMark {
  real: Date;
  story: Date;
}

/** What the seed did when: marks in the order taken, and the real moment after which nothing is moved. */
export interface SeededTimeline {
  timeline: DemoTimeline;
  marks: TimelineMark[];
  end: Date;
}

/**
 * Moves every timestamp the seed's services wrote onto the demo's story: a value written between two marks keeps its
 * offset from the earlier mark, so the order within a step survives. Audit events, plan versions, draws and locked
 * runs refuse changes by trigger, so this runs as the schema's owner with triggers off for the transaction (like
 * resetDatabase), once, before anyone has seen the data. Expiry and retry times stay on the real clock.
 */
export async function placeOnTimeline(owner: EntityManager, seeded: SeededTimeline): Promise<void> {
  const { marks, end, timeline } = seeded;
  if (!marks.length) return;
  const first = marks[0].real;
  await owner.query(`SET LOCAL session_replication_role = replica`);
  await owner.query(`CREATE TEMP TABLE seed_marks (real timestamptz, story timestamptz) ON COMMIT DROP`);
  await owner.query(`INSERT INTO seed_marks SELECT * FROM unnest($1::timestamptz[], $2::timestamptz[])`, [marks.map((m) => m.real), marks.map((m) => m.story)]);
  const columns: { table_name: string; column_name: string }[] = await owner.query(
    `SELECT c.table_name, c.column_name FROM information_schema.columns c JOIN information_schema.tables t USING (table_schema, table_name)
      WHERE c.table_schema = 'public' AND t.table_type = 'BASE TABLE' AND c.data_type = 'timestamp with time zone'
        AND c.column_name NOT IN ('expires_at', 'next_attempt_at')`,
  );
  for (const { table_name: t, column_name: c } of columns) {
    await owner.query(
      `UPDATE "${t}" x SET "${c}" = (SELECT m.story + (x."${c}" - m.real) FROM seed_marks m WHERE m.real <= x."${c}" ORDER BY m.real DESC LIMIT 1)
        WHERE x."${c}" >= $1 AND x."${c}" < $2`,
      [first, end],
    );
  }
  // The demo accounts and schools existed before the study began.
  await owner.query(`UPDATE users SET created_at = $1, updated_at = $1 WHERE email LIKE '%@evenhand.test' AND created_at > $1 AND created_at < $2`, [timeline.accounts, first]);
  await owner.query(
    `UPDATE role_grants g SET created_at = $1 FROM users u WHERE u.id = g.user_id AND u.email LIKE '%@evenhand.test' AND g.created_at > $1 AND g.created_at < $2`,
    [timeline.accounts, first],
  );
  await owner.query(`UPDATE sites SET created_at = $1 WHERE created_at > $1 AND created_at < $2`, [timeline.accounts, first]);
}

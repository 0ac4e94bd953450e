import type { EntityManager } from 'typeorm';
import { createHash } from 'node:crypto';
import { mergePairedSummaries, sampleRanks, type PairedSummary } from '@evenhand/stats';
import type { Arm, SheetState } from '@evenhand/entities';
import { sheetDigestsSql } from '../score-sheets/queries.js';
import { yesCount } from './yes-no.js';
import { momentsColumns, storedMomentsOf, sumSheets, withoutPairs, type SheetMoments } from '../score-sheets/sums.js';

/** Which sheets a run reads: a confirmatory run only accepted ones; monitoring also those awaiting review. */
export const sheetStatesFor = (kind: 'monitoring' | 'confirmatory'): ('accepted' | 'submitted')[] => (kind === 'confirmatory' ? ['accepted'] : ['accepted', 'submitted']);

/** Shapiro–Wilk's approximation is validated for 3 to 5 000 values (Royston 1995); larger arms are tested on a seeded sample of this size. */
export const NORMALITY_SAMPLE = 5000;

export interface ClassroomAggregate {
  classroomId: string;
  siteId: string;
  siteName: string;
  arm: Arm;
  /** Outcome: students analysed, their mean and sum of squared deviations (from SQL aggregates). */
  n: number;
  mean: number | null;
  m2: number | null;
  fromSummary: boolean;
  /** Students with both an outcome and a pretest: their count, means and within-classroom centred sums (null without a baseline). */
  pairs: PairedSummary | null;
}

/** What the value-based statistics need from one arm, aggregated in SQL over the count of each distinct score. */
export interface ArmValues {
  n: number;
  quantiles: [number, number, number, number, number];
  /** Absolute deviations from the arm's mean and median: their mean and sum of squares (Levene, Brown–Forsythe). */
  deviations: Record<'mean' | 'median', { n: number; meanDeviation: number; ssDeviation: number }>;
  /** Sorted outcome values for Shapiro–Wilk: all of them up to NORMALITY_SAMPLE, else a seeded sample of that many. */
  normalitySample: number[];
}

export interface Gathered {
  /** Every classroom with an arm as read (the accounting's standings come from these). */
  read: ClassroomRead[];
  classrooms: ClassroomAggregate[];
  /** Per arm, null when the arm has no student rows. */
  values: Record<Arm, ArmValues | null>;
  /** Group a (intervention) mid-rank sum and Σ(t³ − t) over the pooled rows, for Mann–Whitney. */
  ranks: { rankSumA: number; tieTerm: number } | null;
  /** (outcome, baseline) pairs per arm as paired summaries, null without a baseline. */
  pairs: Record<Arm, PairedSummary | null> | null;
  dataSha256: string;
  analysed: number;
}

interface Scope {
  studyId: string;
  measureId: string;
  waveId: string;
  baselineWaveId: string | null;
  states: string[];
  /** A yes/no measure: its value-based statistics come from the counts, with no scan of the answers. */
  yesNo: boolean;
}

/** One classroom the draw gave an arm, as a run or the Checks read it. */
export interface ClassroomRead {
  classroomId: string;
  siteId: string;
  siteName: string;
  arm: Arm;
  /** Student codes registered to the classroom: its randomised students. */
  registered: number;
  /** Its outcome sheet: state (null: no sheet), and whether anything was entered (looked up only on an open sheet, the one state whose loss reason depends on it). */
  sheetId: string | null;
  sheetState: SheetState | null;
  entered: boolean;
  /** The sheet's class summary when the sheet read is a summary. */
  summary: { n: number; mean: number; m2: number } | null;
  /** When the sheet read has student rows: its digest (hex), the baseline sheet paired with it and that sheet's digest, and its sums. */
  rows: { digest: string | null; pretestSheetId: string | null; pretestDigest: string | null; moments: SheetMoments } | null;
}

/**
 * Every classroom with an arm, in the order of sites and classroom names, with what a reader of the sheets in
 * `states` needs: registered codes, the outcome sheet, its class summary or its rows' sums paired with the classroom's
 * baseline sheet (when `baselineWaveId`): stored sums where they were taken with that baseline sheet, else summed now.
 */
export async function readClassrooms(manager: EntityManager, scope: Omit<Scope, 'yesNo'>): Promise<ClassroomRead[]> {
  const rows: ClassroomRow[] = await manager.query(classroomsSql, [scope.studyId, scope.waveId, scope.measureId, scope.states, scope.baselineWaveId]);
  // By site name, then classroom name, in character-code order (sorted here: sorting 80 000 wide rows cost PostgreSQL a second).
  const before = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);
  rows.sort((a, b) => before(a.site_name, b.site_name) || before(a.classroom_name, b.classroom_name));
  const stored = rows.map(storedMomentsOf);
  const missing = rows.filter((r, i) => r.mode === 'rows' && r.read && stored[i] === null);
  const fresh = await sumSheets(
    manager,
    missing.map((r) => ({ sheetId: r.sheet_id!, pretestSheetId: r.pretest_sheet_id })),
  );
  return rows.map((r, i) => {
    const read = r.read === true;
    const moments = read && r.mode === 'rows' ? (stored[i] ?? fresh.get(r.sheet_id!)!) : null;
    return {
      classroomId: r.classroom_id,
      siteId: r.site_id,
      siteName: r.site_name,
      arm: r.arm,
      registered: r.registered,
      sheetId: r.sheet_id,
      sheetState: r.sheet_state,
      entered: r.entered === true,
      summary: read && r.mode === 'summary' ? { n: r.summary_n!, mean: r.summary_mean!, m2: r.summary_m2! } : null,
      rows: moments
        ? {
            digest: r.digest,
            pretestSheetId: r.pretest_sheet_id,
            pretestDigest: r.pretest_digest,
            // Pairs taken with a baseline sheet this reader does not read are not its pairs.
            moments: r.pretest_sheet_id === null ? withoutPairs(moments) : moments,
          }
        : null,
    };
  });
}

/**
 * Reads what a run needs inside PostgreSQL: per classroom the count, mean, M2, leavers and baseline pairs' sums from
 * its sheet's sums (stored when the sheet was submitted or accepted, else summed now); then, in one parallel scan of
 * the outcome scores, over the count of each distinct score per arm, the ranks, quartiles, absolute deviations and the
 * values of a bounded normality sample (a yes/no measure's come from its counts). The data hash comes from the
 * sheets' digests, stored the same way. Node never holds every row.
 */
export async function gather(manager: EntityManager, scope: Scope): Promise<Gathered> {
  // The distinct-score table stays in memory; JIT compiling these plans costs more than it saves.
  await manager.query(`SET LOCAL work_mem = '64MB'`);
  await manager.query(`SET LOCAL jit = off`);
  const read = await readClassrooms(manager, scope);
  const withRows = read.filter((c) => c.rows !== null);
  await fillMissingDigests(manager, withRows);
  // A classroom is analysed when its sheet has a scored row.
  const analysed = withRows.filter((c) => c.rows!.moments.n > 0);

  const summarySheets = read.filter((c) => c.summary !== null).map((c) => c.sheetId!);
  const summaryLines: { line: string }[] = summarySheets.length ? await manager.query(`SELECT line FROM (${canonicalSummariesSql}) s ORDER BY line COLLATE "C"`, [summarySheets, null]) : [];
  const dataSha256 = dataHash(
    analysed.map((c) => ({ classroomId: c.classroomId, arm: c.arm, outcome: c.rows!.digest!, baseline: c.rows!.pretestDigest })),
    summaryLines.map((l) => l.line),
  );

  const counted = { intervention: 0, comparison: 0 } as Record<Arm, number>;
  for (const c of analysed) counted[c.arm] += c.rows!.moments.n;
  const yesIn = (arm: Arm) => analysed.filter((c) => c.arm === arm).reduce((k, c) => k + yesCount(c.rows!.moments), 0);
  const { values, ranks } = scope.yesNo
    ? yesNoValues({ intervention: yesIn('intervention'), comparison: yesIn('comparison') }, counted)
    : await scoreValues(manager, [scope.studyId, scope.waveId, scope.measureId, scope.states], counted, dataSha256);

  let pairs: Gathered['pairs'] = null;
  if (scope.baselineWaveId) {
    pairs = { intervention: null, comparison: null };
    for (const arm of ['intervention', 'comparison'] as const) {
      const parts = analysed
        .filter((c) => c.arm === arm && c.rows!.moments.pairs > 0)
        .map((c) => pairedOf(c.rows!.moments));
      pairs[arm] = parts.length ? mergePairedSummaries(parts) : null;
    }
  }

  return {
    read,
    classrooms: read.map((c) => {
      const m = c.rows && c.rows.moments.n > 0 ? c.rows.moments : null;
      return {
        classroomId: c.classroomId,
        siteId: c.siteId,
        siteName: c.siteName,
        arm: c.arm,
        n: c.summary ? c.summary.n : (m?.n ?? 0),
        mean: c.summary ? c.summary.mean : (m?.mean ?? null),
        m2: c.summary ? c.summary.m2 : (m?.m2 ?? null),
        fromSummary: c.summary !== null,
        pairs: m && m.pairs > 0 ? pairedOf(m) : null,
      };
    }),
    values,
    ranks,
    pairs,
    dataSha256,
    analysed: counted.intervention + counted.comparison,
  };
}

const QUARTILES = [0, 0.25, 0.5, 0.75, 1];

/**
 * The value-based statistics of a score: one parallel scan of the outcome scores, grouped by distinct score per arm,
 * gives the ranks, quartiles, absolute deviations and the values at the ranks of the normality sample.
 */
async function scoreValues(manager: EntityManager, p: unknown[], counted: Record<Arm, number>, dataSha256: string): Promise<Pick<Gathered, 'values' | 'ranks'>> {
  const wanted = (arm: Arm) => {
    const n = counted[arm];
    if (n === 0) return [];
    const sample = sampleRanks(n, NORMALITY_SAMPLE, `${dataSha256}:${arm}`);
    const quartileRanks = QUARTILES.flatMap((f) => [Math.floor(f * (n - 1)), Math.ceil(f * (n - 1))]);
    return [...new Set([...sample, ...quartileRanks])].sort((a, b) => a - b);
  };
  const requested = { intervention: wanted('intervention'), comparison: wanted('comparison') };
  const valueRows: ValueRow[] = counted.intervention + counted.comparison > 0 ? await manager.query(valuePassSql, [...p, requested.intervention, requested.comparison]) : [];

  const values = { intervention: null, comparison: null } as Gathered['values'];
  let ranks: Gathered['ranks'] = null;
  for (const r of valueRows) {
    const n = Number(r.n);
    const at = new Map(requested[r.arm].map((rank, i) => [rank, r.picked[i]]));
    const quantile = (f: number) => {
      const pos = f * (n - 1);
      const lo = at.get(Math.floor(pos))!;
      return lo + (at.get(Math.ceil(pos))! - lo) * (pos - Math.floor(pos));
    };
    const sample = n <= NORMALITY_SAMPLE ? requested[r.arm] : sampleRanks(n, NORMALITY_SAMPLE, `${dataSha256}:${r.arm}`);
    values[r.arm] = {
      n,
      quantiles: QUARTILES.map(quantile) as ArmValues['quantiles'],
      deviations: {
        mean: { n, meanDeviation: r.mean_deviation, ssDeviation: r.mean_ss },
        median: { n, meanDeviation: r.median_deviation, ssDeviation: r.median_ss },
      },
      normalitySample: sample.map((rank) => at.get(rank)!),
    };
    ranks = { rankSumA: r.rank_sum, tieTerm: r.tie_term };
  }

  return { values, ranks };
}

/**
 * The same statistics of a yes/no measure from its counts alone (answers are 0 and 1), with no second scan: k yes and
 * z = n − k no per arm. Quartiles read the sorted answers (z zeros, then k ones) at the same ranks as a score's; about
 * the mean k/n, Σ|x − mean| = 2kz/n and Σ(x − mean)² = kz/n; about the median m, Σ|x − m| = z·m + k·(1 − m) and
 * Σ(x − m)² = z·m² + k·(1 − m)²; the mid-ranks of the pooled 2×2 table and Σ(t³ − t) over its two tied values.
 */
export function yesNoValues(yes: Record<Arm, number>, counted: Record<Arm, number>): Pick<Gathered, 'values' | 'ranks'> {
  const values = { intervention: null, comparison: null } as Gathered['values'];
  for (const arm of ['intervention', 'comparison'] as const) {
    const n = counted[arm];
    if (n === 0) continue;
    const k = yes[arm];
    const z = n - k;
    const at = (rank: number) => (rank < z ? 0 : 1);
    const quantile = (f: number) => {
      const pos = f * (n - 1);
      const lo = at(Math.floor(pos));
      return lo + (at(Math.ceil(pos)) - lo) * (pos - Math.floor(pos));
    };
    const median = (at(Math.floor((n - 1) / 2)) + at(Math.floor(n / 2))) / 2;
    const spread = (s: number, q: number) => ({ n, meanDeviation: s / n, ssDeviation: (n * q - s * s) / n });
    values[arm] = {
      n,
      quantiles: QUARTILES.map(quantile) as ArmValues['quantiles'],
      deviations: {
        mean: spread((2 * k * z) / n, (k * z) / n),
        median: spread(z * median + k * (1 - median), z * median * median + k * (1 - median) * (1 - median)),
      },
      // A yes/no answer's normality is not tested.
      normalitySample: [],
    };
  }
  if (counted.intervention + counted.comparison === 0) return { values, ranks: null };
  const [a1, b1] = [yes.intervention, yes.comparison];
  const [a0, b0] = [counted.intervention - a1, counted.comparison - b1];
  const rankSumA = (a0 * (a0 + b0 + 1)) / 2 + (a1 * (2 * (a0 + b0) + a1 + b1 + 1)) / 2;
  const tie = (t: number) => t * t * t - t;
  return { values, ranks: { rankSumA, tieTerm: tie(a0 + b0) + tie(a1 + b1) } };
}

const pairedOf = (c: SheetMoments): PairedSummary => ({ n: c.pairs, meanY: c.pair_mean_y!, meanX: c.pair_mean_x!, syy: c.pair_syy!, sxx: c.pair_sxx!, sxy: c.pair_sxy! });

interface ClassroomRow {
  classroom_id: string;
  classroom_name: string;
  site_id: string;
  site_name: string;
  arm: Arm;
  registered: number;
  sheet_id: string | null;
  sheet_state: SheetState | null;
  mode: 'rows' | 'summary' | null;
  /** The sheet is in the states read. */
  read: boolean | null;
  entered: boolean | null;
  summary_n: number | null;
  summary_mean: number | null;
  summary_m2: number | null;
  digest: string | null;
  pretest_sheet_id: string | null;
  pretest_digest: string | null;
  /** Then the sheet's stored sums as moments (`stored_…`, null when none were stored with the baseline sheet read). */
  [stored: `stored_${string}`]: unknown;
}

/**
 * Every classroom with an arm: its registered codes (kept by the registry's triggers), its outcome sheet, and the
 * baseline sheet read with it. $1 study, $2 outcome wave, $3 measure, $4 sheet states read, $5 baseline wave (null: no pairs).
 */
const classroomsSql = `
  SELECT c.id AS classroom_id, c.name AS classroom_name, c.site_id, s.name AS site_name, c.arm, coalesce(r.n, 0)::int AS registered,
         sh.id AS sheet_id, sh.state AS sheet_state, sh.mode, sh.state = ANY($4) AS read,
         (sh.summary_n IS NOT NULL OR (sh.state = 'open' AND EXISTS (SELECT 1 FROM scores x WHERE x.sheet_id = sh.id))) AS entered,
         sh.summary_n, sh.summary_mean::float8 AS summary_mean, (sh.summary_sd::float8 ^ 2) * (sh.summary_n - 1) AS summary_m2,
         encode(sh.rows_sha256, 'hex') AS digest, bs.id AS pretest_sheet_id, encode(bs.rows_sha256, 'hex') AS pretest_digest,
         ${momentsColumns('a', 'stored_')}
    FROM classrooms c JOIN sites s ON s.id = c.site_id
    LEFT JOIN registered_counts r ON r.classroom_id = c.id
    LEFT JOIN score_sheets sh ON sh.classroom_id = c.id AND sh.wave_id = $2 AND sh.measure_id = $3
    LEFT JOIN score_sheets bs ON $5::uuid IS NOT NULL AND bs.classroom_id = c.id AND bs.wave_id = $5 AND bs.measure_id = $3 AND bs.state = ANY($4)
    LEFT JOIN sheet_sums a ON a.sheet_id = sh.id AND (bs.id IS NULL OR a.pretest_sheet_id = bs.id)
   WHERE c.study_id = $1 AND c.arm IS NOT NULL`;

/** Digests of sheets that have none stored (rows written some other way than the submit/accept path). */
async function fillMissingDigests(manager: EntityManager, classrooms: ClassroomRead[]): Promise<void> {
  const missing = classrooms.flatMap((c) => [
    ...(c.rows!.digest === null ? [{ id: c.sheetId!, set: (d: string) => (c.rows!.digest = d) }] : []),
    ...(c.rows!.pretestSheetId !== null && c.rows!.pretestDigest === null ? [{ id: c.rows!.pretestSheetId, set: (d: string) => (c.rows!.pretestDigest = d) }] : []),
  ]);
  if (missing.length === 0) return;
  const computed: { id: string; digest: string }[] = await manager.query(`SELECT id, encode(digest, 'hex') AS digest FROM (${sheetDigestsSql}) d`, [missing.map((m) => m.id)]);
  const byId = new Map(computed.map((d) => [d.id, d.digest]));
  for (const m of missing) m.set(byId.get(m.id)!);
}

/** The digest of a sheet without scored rows: the SHA-256 of the empty text. */
const EMPTY_DIGEST = createHash('sha256').digest('hex');

/**
 * The data hash: SHA-256 over one line per classroom with analysed rows, "classroom_id,arm,outcome digest,pretest
 * digest" (the pretest digest empty without pretest scores), in byte order of classroom ID, followed by the summary
 * lines (byte order), all joined with "\n". A digest is the lowercase hex SHA-256 of the sheet's "student_code,score"
 * lines in byte order of student code, joined with "\n" (see sheetDigestsSql in score-sheets/queries.ts), so the bundle's rows rebuild it.
 */
export function dataHash(classrooms: { classroomId: string; arm: Arm; outcome: string; baseline: string | null }[], summaryLines: string[]): string {
  const lines = [...classrooms]
    .sort((a, b) => (a.classroomId < b.classroomId ? -1 : a.classroomId > b.classroomId ? 1 : 0))
    .map((c) => `${c.classroomId},${c.arm},${c.outcome},${c.baseline === null || c.baseline === EMPTY_DIGEST ? '' : c.baseline}`);
  // Line by line: joining 80 000 lines into one text first took ten times as long.
  const hash = createHash('sha256');
  [...lines, ...summaryLines].forEach((line, i) => hash.update(i === 0 ? line : `\n${line}`));
  return hash.digest('hex');
}

interface ValueRow {
  arm: Arm;
  n: string;
  rank_sum: number;
  tie_term: number;
  mean_deviation: number;
  mean_ss: number;
  median_deviation: number;
  median_ss: number;
  picked: number[];
}

/**
 * The analysed outcome scores, with their classroom's arm: scored rows of the wave's row-mode sheets in the run's
 * states, of classrooms with an arm. Plain joins, so PostgreSQL scans and aggregates them in parallel.
 * $1 study, $2 wave, $3 measure, $4 sheet states.
 */
const outcomeJoins = `scores o JOIN score_sheets sh ON sh.id = o.sheet_id AND sh.state = ANY($4) AND sh.mode = 'rows'
           JOIN classrooms c ON c.id = sh.classroom_id AND c.arm IS NOT NULL`;
const outcomeFilter = `o.study_id = $1 AND o.wave_id = $2 AND o.measure_id = $3 AND o.score IS NOT NULL`;
/**
 * One row per arm from the count of each distinct outcome score: n; the arm's mid-rank sum ×2 and Σ(t³ − t) over the
 * pooled table; mean and median; Σ|x − c| and Σ(x − c)² for both centres (exact numeric); the values at the requested
 * ranks ($5 intervention, $6 comparison), found by binary search (width_bucket) over the cumulative counts.
 */
const valuePassSql = `
  WITH h AS (
    SELECT o.score AS v, count(*) FILTER (WHERE c.arm = 'intervention') AS a, count(*) FILTER (WHERE c.arm = 'comparison') AS b
      FROM ${outcomeJoins} WHERE ${outcomeFilter} GROUP BY o.score),
  r AS (
    SELECT v, a, b, (sum(a + b) OVER w - (a + b))::bigint AS below, (sum(a) OVER w - a)::bigint AS a_below, (sum(b) OVER w - b)::bigint AS b_below
      FROM h WINDOW w AS (ORDER BY v)),
  ranks AS (SELECT sum(a * (2 * below + a + b + 1)) / 2 AS rank_sum, sum((a + b)::numeric * (a + b) * (a + b) - (a + b)) AS tie_term FROM r),
  g AS (SELECT 'intervention' AS arm, v, a AS k, a_below AS below FROM r WHERE a > 0 UNION ALL SELECT 'comparison', v, b, b_below FROM r WHERE b > 0),
  -- The picked values are read from a float8 copy: subscripting a numeric[] walks its variable-width elements each time.
  c AS (SELECT arm, sum(k)::bigint AS n, sum(k * v) / sum(k) AS mean, array_agg(below ORDER BY v) AS belows, array_agg(v ORDER BY v) AS vs,
               array_agg(v::float8 ORDER BY v) AS fvs FROM g GROUP BY arm),
  m AS (SELECT arm, n, mean, belows, fvs, (vs[width_bucket((n - 1) / 2, belows)] + vs[width_bucket(n / 2, belows)]) / 2 AS median FROM c),
  d AS (
    SELECT g.arm, sum(g.k * abs(g.v - m.mean)) AS s1, sum(g.k * (g.v - m.mean) * (g.v - m.mean)) AS q1,
           sum(g.k * abs(g.v - m.median)) AS s2, sum(g.k * (g.v - m.median) * (g.v - m.median)) AS q2
      FROM g JOIN m USING (arm) GROUP BY g.arm)
  SELECT m.arm, m.n, ranks.rank_sum::float8 AS rank_sum, ranks.tie_term::float8 AS tie_term,
         (d.s1 / m.n)::float8 AS mean_deviation, ((m.n * d.q1 - d.s1 * d.s1) / m.n)::float8 AS mean_ss,
         (d.s2 / m.n)::float8 AS median_deviation, ((m.n * d.q2 - d.s2 * d.s2) / m.n)::float8 AS median_ss,
         (SELECT array_agg(m.fvs[width_bucket(p.rank, m.belows)] ORDER BY p.i)
            FROM unnest(CASE m.arm WHEN 'intervention' THEN $5::bigint[] ELSE $6::bigint[] END) WITH ORDINALITY AS p(rank, i)) AS picked
    FROM m JOIN d USING (arm) CROSS JOIN ranks`;

/**
 * One text line per classroom that reported only a summary of the outcome: summary,classroom_id,arm,n,mean,sd. They count
 * in the t tests and effect sizes, so they are part of the data hash and of the bundle. $1: the outcome sheets; $2: the
 * arms a finished run read (classroom id → arm), or null for today's arms (a run reading now).
 */
export const canonicalSummariesSql = `
  SELECT concat_ws(',', 'summary', sh.classroom_id, a.arm, sh.summary_n::text, sh.summary_mean::text, sh.summary_sd::text) AS line
    FROM unnest($1::uuid[]) AS ids(id) JOIN score_sheets sh ON sh.id = ids.id JOIN classrooms c ON c.id = sh.classroom_id
         CROSS JOIN LATERAL (SELECT CASE WHEN $2::jsonb IS NULL THEN c.arm ELSE $2::jsonb ->> c.id::text END AS arm) a
   WHERE sh.mode = 'summary' AND a.arm IS NOT NULL`;

/**
 * The bundle's rows: classroom_id,arm,student_code,outcome,pretest for every student with an outcome or a pretest
 * score in a classroom with analysed rows (either score empty when missing), scores as PostgreSQL prints numeric, in
 * byte order of classroom ID then student code: the lines the sheets' digests are rebuilt from.
 * $1: outcome sheets with student rows, $2: the matching baseline sheet of each (or null), $3: the arms the run read.
 */
export const bundleRowsSql = `
  WITH sh AS (SELECT u.id, u.baseline_id, s.classroom_id FROM unnest($1::uuid[], $2::uuid[]) AS u(id, baseline_id) JOIN score_sheets s ON s.id = u.id),
       o AS (SELECT sh.classroom_id, x.student_code, x.score FROM sh JOIN scores x ON x.sheet_id = sh.id WHERE x.score IS NOT NULL),
       b AS (SELECT sh.classroom_id, x.student_code, x.score FROM sh JOIN scores x ON x.sheet_id = sh.baseline_id
              WHERE x.score IS NOT NULL AND sh.classroom_id IN (SELECT classroom_id FROM o))
  SELECT concat_ws(',', classroom_id, $3::jsonb ->> classroom_id::text, student_code, coalesce(o.score::text, ''), coalesce(b.score::text, '')) AS line
    FROM o FULL JOIN b USING (classroom_id, student_code)
   ORDER BY classroom_id::text COLLATE "C", student_code COLLATE "C"`;

import type { EntityManager } from 'typeorm';
import { createHash } from 'node:crypto';
import { mergePairedSummaries, sampleRanks, type PairedSummary } from '@evenhand/stats';
import type { Arm, SheetState } from '@evenhand/entities';
import { sheetDigestsHexSql, type SheetMoments } from '../score-sheets/queries.js';
import { storedMomentsOf, sumSheets } from '../score-sheets/sums.js';
import { aggregateSettingsSql, classroomsSql, summaryLinesSql, valuePassSql, type ClassroomRow, type ValueRow } from './queries.js';
import { yesCount } from './yes-no.js';

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

/** Byte order of two texts of ASCII characters, such as IDs (the order of PostgreSQL's COLLATE "C"); character-code order of any two. */
export const byteOrder = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

/**
 * Every classroom with an arm, in byte order of classroom ID, with what a reader of the sheets in
 * `states` needs: registered codes, the outcome sheet, its class summary or its rows' sums paired with the classroom's
 * baseline sheet (when `baselineWaveId`): stored sums where they were taken with that baseline sheet, else summed now.
 */
export async function readClassrooms(manager: EntityManager, scope: Omit<Scope, 'yesNo'>): Promise<ClassroomRead[]> {
  const rows: ClassroomRow[] = await manager.query(classroomsSql, [scope.studyId, scope.waveId, scope.measureId, scope.states, scope.baselineWaveId]);
  // In byte order of classroom ID, the data hash's order (sorted here: sorting 80 000 wide rows costs PostgreSQL more).
  rows.sort((a, b) => byteOrder(a.classroom_id, b.classroom_id));
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
            moments,
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
  for (const setting of aggregateSettingsSql) await manager.query(setting);
  const read = await readClassrooms(manager, scope);
  const withRows = read.filter((c) => c.rows !== null);
  await fillMissingDigests(manager, withRows);
  // A classroom is analysed when its sheet has a scored row.
  const analysed = withRows.filter((c) => c.rows!.moments.n > 0);

  const summarySheets = read.filter((c) => c.summary !== null).map((c) => c.sheetId!);
  const summaryLines: { line: string }[] = summarySheets.length ? await manager.query(summaryLinesSql, [summarySheets, null]) : [];
  const dataSha256 = dataHash(
    analysed.map((c) => ({ classroomId: c.classroomId, arm: c.arm, outcome: c.rows!.digest!, baseline: c.rows!.pretestDigest })),
    summaryLines.map((l) => l.line),
  );

  const counted = { intervention: 0, comparison: 0 } as Record<Arm, number>;
  for (const c of analysed) counted[c.arm] += c.rows!.moments.n;
  const yesIn = (arm: Arm) => analysed.filter((c) => c.arm === arm).reduce((k, c) => k + yesCount(c.rows!.moments), 0);
  const { values, ranks } = scope.yesNo
    ? yesNoValues({ intervention: yesIn('intervention'), comparison: yesIn('comparison') }, counted)
    : await scoreValues(manager, [scope.studyId, scope.waveId, scope.measureId, unreadSheets(read)], counted, dataSha256);

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

/** The outcome sheets of these classrooms that a run does not read: not in its states, or a class summary. */
function unreadSheets(read: ClassroomRead[]): string[] {
  const unread: string[] = [];
  for (const c of read) if (c.sheetId !== null && c.rows === null) unread.push(c.sheetId);
  return unread;
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

/** Digests of sheets that have none stored (rows written some other way than the submit/accept path). */
async function fillMissingDigests(manager: EntityManager, classrooms: ClassroomRead[]): Promise<void> {
  // A plain loop: building two small arrays per classroom cost a tenth of a second at 80 000 classrooms.
  const missing: { id: string; set: (digest: string) => void }[] = [];
  for (const c of classrooms) {
    const rows = c.rows!;
    if (rows.digest === null) missing.push({ id: c.sheetId!, set: (d) => (rows.digest = d) });
    if (rows.pretestSheetId !== null && rows.pretestDigest === null) missing.push({ id: rows.pretestSheetId, set: (d) => (rows.pretestDigest = d) });
  }
  if (missing.length === 0) return;
  const computed: { id: string; digest: string }[] = await manager.query(sheetDigestsHexSql, [missing.map((m) => m.id)]);
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
  // A run passes them already in this order, which the sort then only confirms.
  const sorted = [...classrooms].sort((a, b) => byteOrder(a.classroomId, b.classroomId));
  // Hashed in pieces of about 64 KB, each built straight from its lines: one text of 80 000 lines took ten times as
  // long, one update per line twice as long, and an array of the lines first three times as long.
  const hash = createHash('sha256');
  let piece = '';
  let first = true;
  const add = (line: string) => {
    piece += first ? line : '\n' + line;
    first = false;
    if (piece.length >= 65_536) {
      hash.update(piece);
      piece = '';
    }
  };
  for (const c of sorted) add(c.classroomId + ',' + c.arm + ',' + c.outcome + ',' + (c.baseline === null || c.baseline === EMPTY_DIGEST ? '' : c.baseline));
  for (const line of summaryLines) add(line);
  return hash.update(piece).digest('hex');
}

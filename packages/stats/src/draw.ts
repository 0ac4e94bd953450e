import seedrandom from 'seedrandom';
import { StatsInputError } from './errors.js';

export interface DrawBlock {
  blockId: string;
  unitIds: readonly string[];
}

export interface DrawInput {
  /** Any non-empty string; the same seed and input always give the same assignment. */
  seed: string;
  blocks: readonly DrawBlock[];
  /** Arm names, first the intervention (default ['intervention', 'comparison']). */
  arms?: readonly [string, string];
  /** Allocation ratio of the two arms as whole numbers (default [1, 1]; e.g. [2, 1]). */
  ratio?: readonly [number, number];
}

export interface Assignment {
  blockId: string;
  unitId: string;
  arm: string;
}

export interface DrawBlockSummary {
  blockId: string;
  units: number;
  /** Units per arm, in the order of `arms`. */
  counts: [number, number];
  /** Arms that received this block's units beyond whole ratio cycles (e.g. the odd unit of a 1:1 block). */
  remainderArms: string[];
}

export interface DrawResult {
  algorithm: 'blocked-fisher-yates';
  version: '1';
  /** The pseudo-random generator: seedrandom's default ARC4-based generator. */
  prng: 'seedrandom-arc4';
  seed: string;
  arms: [string, string];
  ratio: [number, number];
  /** The shuffled cycle of ratio slots from which blocks take their remainder units, in order. */
  remainderCycle: string[];
  assignments: Assignment[];
  blocks: DrawBlockSummary[];
  totals: [number, number];
}

/** Code-unit order, independent of locale. */
function compareIds(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** Uniform integer in [0, bound) from 32 random bits, rejecting the biased top range (so every draw is exactly fair). */
function uniformInt(rng: seedrandom.PRNG, bound: number): number {
  const range = 4294967296;
  const limit = range - (range % bound);
  for (;;) {
    const r = rng.int32() >>> 0;
    if (r < limit) return r % bound;
  }
}

/** Fisher–Yates shuffle in place, Durstenfeld's form: for i = n−1…1 swap item i with a uniform j ∈ [0, i] (Durstenfeld 1964). */
function shuffle<T>(items: T[], rng: seedrandom.PRNG): void {
  for (let i = items.length - 1; i > 0; i--) {
    const j = uniformInt(rng, i + 1);
    const t = items[i];
    items[i] = items[j];
    items[j] = t;
  }
}

/**
 * Reproducible blocked random assignment ("blocked-fisher-yates", version 1).
 * 1. Blocks are taken in blockId order and each block's unit IDs in ID order (code-unit order), so the input order never
 *    matters. The generator is seedrandom's ARC4 generator seeded with `seed`; integers come from 32-bit draws with
 *    rejection, so each is exactly uniform.
 * 2. First, one cycle of ratio slots (r₁ of the first arm, r₂ of the second) is shuffled: the remainder cycle.
 * 3. Then, per block: its units are shuffled by Fisher–Yates (Fisher & Yates 1938; Durstenfeld 1964). A block of n units
 *    gets ⌊n/(r₁+r₂)⌋ whole cycles, and its n mod (r₁+r₂) remaining units take the next slots of the remainder cycle,
 *    continuing where the previous block left off and wrapping around. The first units of the shuffled order go to the
 *    first arm, the rest to the second.
 * For 1:1 this means the first block with an odd count gives its extra unit to an arm chosen by the generator, and later
 * odd blocks alternate, so the overall arms never differ by more than one unit (in general, totals stay within one
 * cycle of the exact ratio).
 */
export function blockedDraw(input: DrawInput): DrawResult {
  if (input === null || typeof input !== 'object') throw new StatsInputError('blockedDraw needs { seed, blocks }');
  const { seed } = input;
  if (typeof seed !== 'string' || seed.length === 0) throw new StatsInputError('blockedDraw: seed must be a non-empty string');
  const arms = (input.arms ?? ['intervention', 'comparison']) as readonly string[];
  if (!Array.isArray(arms) || arms.length !== 2 || arms.some((a) => typeof a !== 'string' || a.length === 0) || arms[0] === arms[1]) {
    throw new StatsInputError('blockedDraw: arms must be two different non-empty names');
  }
  const ratio = (input.ratio ?? [1, 1]) as readonly number[];
  if (!Array.isArray(ratio) || ratio.length !== 2 || ratio.some((r) => !Number.isInteger(r) || r < 1 || r > 1000)) {
    throw new StatsInputError('blockedDraw: ratio must be two whole numbers from 1 to 1000, e.g. [1, 1] or [2, 1]');
  }
  if (!Array.isArray(input.blocks) || input.blocks.length === 0) throw new StatsInputError('blockedDraw: blocks must be a non-empty array');
  const seenBlocks = new Set<string>();
  const seenUnits = new Map<string, string>();
  const blocks = input.blocks.map((b, i) => {
    if (b === null || typeof b !== 'object' || typeof b.blockId !== 'string' || b.blockId.length === 0) {
      throw new StatsInputError(`blockedDraw: block ${i + 1} needs a non-empty string blockId`);
    }
    if (seenBlocks.has(b.blockId)) throw new StatsInputError(`blockedDraw: block "${b.blockId}" appears twice`);
    seenBlocks.add(b.blockId);
    if (!Array.isArray(b.unitIds) || b.unitIds.length === 0) throw new StatsInputError(`blockedDraw: block "${b.blockId}" has no units`);
    for (const u of b.unitIds) {
      if (typeof u !== 'string' || u.length === 0) throw new StatsInputError(`blockedDraw: block "${b.blockId}" has a unit ID that is not a non-empty string`);
      const other = seenUnits.get(u);
      if (other !== undefined) throw new StatsInputError(`blockedDraw: unit "${u}" appears twice (blocks "${other}" and "${b.blockId}")`);
      seenUnits.set(u, b.blockId);
    }
    return { blockId: b.blockId, unitIds: [...b.unitIds].sort(compareIds) };
  });
  blocks.sort((p, q) => compareIds(p.blockId, q.blockId));

  const rng = seedrandom(seed);
  const [r1, r2] = ratio;
  const cycleLength = r1 + r2;
  const remainderCycle: string[] = [...Array<string>(r1).fill(arms[0]), ...Array<string>(r2).fill(arms[1])];
  shuffle(remainderCycle, rng);
  let cursor = 0;

  const assignments: Assignment[] = [];
  const summaries: DrawBlockSummary[] = [];
  const totals: [number, number] = [0, 0];
  for (const block of blocks) {
    const units = block.unitIds.slice();
    shuffle(units, rng);
    const n = units.length;
    const cycles = Math.floor(n / cycleLength);
    const remainder = n % cycleLength;
    const remainderArms: string[] = [];
    for (let k = 0; k < remainder; k++) {
      remainderArms.push(remainderCycle[cursor]);
      cursor = (cursor + 1) % cycleLength;
    }
    const first = cycles * r1 + remainderArms.filter((a) => a === arms[0]).length;
    const counts: [number, number] = [first, n - first];
    const armOf = new Map<string, string>();
    units.forEach((u, k) => armOf.set(u, k < first ? arms[0] : arms[1]));
    for (const unitId of block.unitIds) assignments.push({ blockId: block.blockId, unitId, arm: armOf.get(unitId) as string });
    totals[0] += counts[0];
    totals[1] += counts[1];
    summaries.push({ blockId: block.blockId, units: n, counts, remainderArms });
  }
  return {
    algorithm: 'blocked-fisher-yates',
    version: '1',
    prng: 'seedrandom-arc4',
    seed,
    arms: [arms[0], arms[1]],
    ratio: [r1, r2],
    remainderCycle,
    assignments,
    blocks: summaries,
    totals,
  };
}

/**
 * A reproducible simple random sample of k of the ranks 0…n−1, without replacement, in increasing order: Floyd's
 * algorithm (Bentley & Floyd 1987) on seedrandom's ARC4 generator seeded with `seed`, integers drawn exactly uniform as in
 * the draw. With k ≥ n every rank is returned. Picking ranks of the sorted values picks a random sample of the values.
 */
export function sampleRanks(n: number, k: number, seed: string): number[] {
  if (!Number.isInteger(n) || n < 0) throw new StatsInputError(`sampleRanks: n must be an integer >= 0 (got ${n})`);
  if (!Number.isInteger(k) || k < 0) throw new StatsInputError(`sampleRanks: k must be an integer >= 0 (got ${k})`);
  if (typeof seed !== 'string' || seed.length === 0) throw new StatsInputError('sampleRanks: the seed must be a non-empty string');
  if (k >= n) return Array.from({ length: n }, (_, i) => i);
  const rng = seedrandom(seed);
  const chosen = new Set<number>();
  for (let j = n - k; j < n; j++) {
    const t = uniformInt(rng, j + 1);
    chosen.add(chosen.has(t) ? j : t);
  }
  return [...chosen].sort((a, b) => a - b);
}

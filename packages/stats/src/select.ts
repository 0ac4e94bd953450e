import { describeNonFinite, requirePlainNumbers, requireSample, type Sample } from './input.js';

/** Deterministic pseudo-random source (Park & Miller 1988, multiplier 48271), so a given input always takes the same path. */
function lcg(state: number): number {
  return (state * 48271) % 2147483647;
}

/** Below this size a copy and Hoare selection is cheaper than sampling. */
export const SMALL = 4096;

/**
 * Rearranges buf[lo..hi] so that buf[k] holds the value of rank k, with no larger value before it and no smaller after.
 * Hoare's FIND (1961) with a pseudo-random median-of-three pivot and Hoare partitioning (robust to ties): expected
 * linear time.
 */
export function selectInPlace(buf: Float64Array, k: number, lo = 0, hi = buf.length - 1): void {
  let seed = 12345;
  while (hi > lo) {
    if (hi - lo < 16) {
      for (let i = lo + 1; i <= hi; i++) {
        const v = buf[i];
        let j = i - 1;
        while (j >= lo && buf[j] > v) {
          buf[j + 1] = buf[j];
          j--;
        }
        buf[j + 1] = v;
      }
      return;
    }
    seed = lcg(seed);
    const r1 = lo + (seed % (hi - lo + 1));
    seed = lcg(seed);
    const r2 = lo + (seed % (hi - lo + 1));
    seed = lcg(seed);
    const r3 = lo + (seed % (hi - lo + 1));
    const a = buf[r1];
    const b = buf[r2];
    const c = buf[r3];
    const p = a < b ? (b < c ? r2 : a < c ? r3 : r1) : a < c ? r1 : b < c ? r3 : r2;
    // With the pivot at lo, Hoare's partition always ends with lo <= j < hi, so every round shrinks the range.
    const pivot = buf[p];
    buf[p] = buf[lo];
    buf[lo] = pivot;
    let i = lo - 1;
    let j = hi + 1;
    for (;;) {
      do i++;
      while (buf[i] < pivot);
      do j--;
      while (buf[j] > pivot);
      if (i >= j) break;
      const t = buf[i];
      buf[i] = buf[j];
      buf[j] = t;
    }
    if (k <= j) hi = j;
    else lo = j + 1;
  }
}

function minOf(buf: Float64Array, lo: number, hi: number): number {
  let m = buf[lo];
  for (let i = lo + 1; i <= hi; i++) if (buf[i] < m) m = buf[i];
  return m;
}

/** Values of ranks k and kHigh (kHigh = k or k + 1) of a Float64Array that may be reordered. */
function ranksOfCopy(buf: Float64Array, k: number, kHigh: number): [number, number] {
  selectInPlace(buf, k);
  const lower = buf[k];
  return [lower, kHigh === k ? lower : minOf(buf, k + 1, buf.length - 1)];
}

/** Bounds [lo, hi] from a stratified sample, expected to contain ranks k..kHigh, and a buffer size for the band. */
export interface Band {
  lo: number;
  hi: number;
  /** A sampled value near rank k: a good shift for sums of deviations from the median. */
  centre: number;
  capacity: number;
}

/**
 * Takes one value at a pseudo-random position in each of s equal strata of x (memory-friendly, and never worse than
 * simple random sampling for quantiles) and brackets rank k by 4.5 standard errors of the sample quantile either side
 * (the sampling step of Floyd & Rivest 1975), selecting the bounds in the sample rather than sorting it.
 */
export function planBand(x: Sample, k: number, kHigh: number): Band {
  const n = x.length;
  const s = Math.min(8192, Math.max(1024, Math.round(8 * Math.sqrt(n))));
  const sample = new Float64Array(s);
  const stride = n / s;
  let seed = 987654321;
  for (let i = 0; i < s; i++) {
    seed = lcg(seed);
    const start = Math.floor(i * stride);
    const width = Math.max(1, Math.floor((i + 1) * stride) - start);
    sample[i] = x[start + (seed % width)];
  }
  const f = (k + 0.5) / n;
  const se = Math.sqrt(f * (1 - f) * s) + 1;
  const iLo = Math.floor(f * s - 4.5 * se) - 1;
  const iHi = Math.ceil(((kHigh + 0.5) / n) * s + 4.5 * se) + 1;
  const iMid = Math.min(s - 1, Math.max(0, Math.round(f * s)));
  // Three order statistics of the sample by selection (cheaper than sorting it): lo, the centre, hi.
  let lo = -Infinity;
  let hi = Infinity;
  let from = 0;
  if (iLo > 0) {
    selectInPlace(sample, iLo);
    lo = sample[iLo];
    from = iLo + 1;
  }
  if (iHi < s - 1) {
    selectInPlace(sample, iHi, from, s - 1);
    hi = sample[iHi];
  }
  const upTo = iHi < s - 1 ? iHi - 1 : s - 1;
  if (iMid >= from && iMid <= upTo) selectInPlace(sample, iMid, from, upTo);
  const centre = sample[iMid];
  // Size the buffer by how many sampled values fell in [lo, hi] (ties can make that more than the index range).
  let inBand = 0;
  for (let i = 0; i < s; i++) inBand += +(sample[i] >= lo) & +(sample[i] <= hi);
  const capacity = Math.min(n, Math.ceil((inBand / s) * n * 1.5) + 1024);
  return { lo, hi, centre, capacity };
}

/**
 * Values of ranks k and kHigh (kHigh = k or k + 1) of a finite Float64Array, in expected linear time: sampled bounds,
 * one pass that counts values below the band and copies the band, then the same on the band (or Hoare's selection once
 * it is small). The input is not modified.
 */
export function selectRanks(x: Float64Array, k: number, kHigh: number): [number, number] {
  const n = x.length;
  if (n < SMALL) return ranksOfCopy(x.slice(), k, kHigh);
  const { lo, hi, capacity } = planBand(x, k, kHigh);
  const band = new Float64Array(capacity + 1);
  const below = scanBand(x, lo, hi, band, capacity);
  if (below < 0) return ranksOfCopy(x.slice(), k, kHigh);
  const m = bandCount;
  return finishBand(band, m, below, k, kHigh, n) ?? ranksOfCopy(x.slice(), k, kHigh);
}

let bandCount = 0;

/**
 * One pass: returns the count of values below lo (−1 if the band overflowed) and leaves the band size in bandCount.
 * Branch-free: every value is written at band[m], and m advances only for values inside [lo, hi]; comparisons turned
 * into 0/1 avoid mispredicting on half of the values.
 */
function scanBand(x: Float64Array, lo: number, hi: number, band: Float64Array, capacity: number): number {
  const n = x.length;
  let below = 0;
  let m = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i];
    below += +(v < lo);
    band[m] = v;
    m += +(v >= lo) & +(v <= hi);
    if (m === capacity) return -1;
  }
  bandCount = m;
  return below;
}

/**
 * Finishes a band selection: recurses on the band while it is large and at most a quarter of its parent (ties can keep
 * a band from shrinking), else selects in it directly. Null when the band missed the wanted ranks.
 */
export function finishBand(
  band: Float64Array,
  m: number,
  below: number,
  k: number,
  kHigh: number,
  parentSize: number,
): [number, number] | null {
  if (below > k || below + m <= kHigh) return null;
  const view = band.subarray(0, m);
  if (m >= SMALL && 4 * m <= parentSize) return selectRanks(view, k - below, kHigh - below);
  return ranksOfCopy(view, k - below, kHigh - below);
}

/**
 * Median in expected linear time (no full sort): sampled band + Hoare selection (Floyd & Rivest 1975; Hoare 1961).
 * Even n: (a + b)/2 of the two middle values, as NumPy computes it. Throws on non-finite values.
 */
export function median(x: Sample, label = 'values'): number {
  const buf = ArrayBuffer.isView(x) && x instanceof Float64Array ? checkFinite(x, label) : copyChecked(x, label, 1);
  const n = buf.length;
  const k = (n - 1) >> 1;
  const [lower, upper] = selectRanks(buf, k, n % 2 === 1 ? k : k + 1);
  return lower === upper ? lower : (lower + upper) / 2;
}

function checkFinite(x: Float64Array, label: string): Float64Array {
  requireSample(x, label, 1);
  let check = 0;
  for (let i = 0; i < x.length; i++) check += x[i] - x[i];
  if (check !== 0) throw describeNonFinite(x, label);
  return x;
}

/** A validated Float64Array copy of a sample (throws on non-numbers and non-finite values). */
export function copyChecked(x: Sample, label: string, min = 2): Float64Array {
  requireSample(x, label, min);
  if (!ArrayBuffer.isView(x)) requirePlainNumbers(x, label);
  const out = new Float64Array(x.length);
  let check = 0;
  for (let i = 0; i < x.length; i++) {
    const v = x[i];
    check += v - v;
    out[i] = v;
  }
  if (check !== 0) throw describeNonFinite(x, label);
  return out;
}

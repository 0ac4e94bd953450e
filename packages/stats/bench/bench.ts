/**
 * Benchmark (not a test): time of welchT + levene(median) + hedgesG on 2 × 1 000 000 values divided by the time of a
 * plain two-pass mean/variance loop over the same arrays (the memory-bound floor), each the median of several
 * interleaved repetitions; then checks that summarize + mergeSummaries over 10 000 chunks equals one pass.
 */
import { hedgesG, levene, mergeAllSummaries, mergeSummaries, summarize, welchT, type Summary } from '../src/index.js';

const N = 1_000_000;
const REPS = 15;

/** Park–Miller LCG + Irwin–Hall sum of 12 uniforms: reproducible roughly normal test scores. */
function scores(n: number, seed: number, mean: number, sd: number): Float64Array {
  const x = new Float64Array(n);
  let s = seed;
  for (let i = 0; i < n; i++) {
    let sum = 0;
    for (let j = 0; j < 12; j++) {
      s = (s * 48271) % 2147483647;
      sum += s / 2147483647;
    }
    x[i] = mean + sd * (sum - 6);
  }
  return x;
}

function twoPassFloor(x: Float64Array): number {
  let sum = 0;
  for (let i = 0; i < x.length; i++) sum += x[i];
  const mean = sum / x.length;
  let ss = 0;
  for (let i = 0; i < x.length; i++) {
    const d = x[i] - mean;
    ss += d * d;
  }
  return ss / (x.length - 1);
}

function median(values: number[]): number {
  const s = values.slice().sort((p, q) => p - q);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

const a = scores(N, 20240601, 250, 40);
const b = scores(N, 19700101, 254, 44);

let sink = 0;
const floorRun = () => {
  sink += twoPassFloor(a) + twoPassFloor(b);
};
const workRun = () => {
  const t = welchT(a, b);
  const l = levene([a, b], { center: 'median' });
  const g = hedgesG(a, b);
  sink += t.t + l.statistic + g.g;
};

for (let i = 0; i < 5; i++) {
  floorRun();
  workRun();
}

const floorTimes: number[] = [];
const workTimes: number[] = [];
const ratios: number[] = [];
for (let r = 0; r < REPS; r++) {
  let t0 = performance.now();
  floorRun();
  const floor = performance.now() - t0;
  t0 = performance.now();
  workRun();
  const work = performance.now() - t0;
  floorTimes.push(floor);
  workTimes.push(work);
  ratios.push(work / floor);
}

const floorMs = median(floorTimes);
const workMs = median(workTimes);
console.log(`arrays: 2 × ${N.toLocaleString('en-US')} values, ${REPS} repetitions (medians)`);
console.log(`two-pass mean/variance floor:          ${floorMs.toFixed(2)} ms`);
console.log(`welchT + levene(median) + hedgesG:     ${workMs.toFixed(2)} ms`);
console.log(`ratio (median work / median floor):    ${(workMs / floorMs).toFixed(2)}×   (goal ≤ 3×)`);
console.log(`ratio (median of per-repetition ratio): ${median(ratios).toFixed(2)}×`);

// summarize + mergeSummaries over 10 000 chunks must equal one pass to 1e-12 relative.
const CHUNKS = 10_000;
const size = N / CHUNKS;
const parts: Summary[] = [];
for (let c = 0; c < CHUNKS; c++) parts.push(summarize(a.subarray(c * size, (c + 1) * size)));
const whole = summarize(a);
let sequential = parts[0];
for (let c = 1; c < CHUNKS; c++) sequential = mergeSummaries(sequential, parts[c]);
const tree = mergeAllSummaries(parts);
const rel = (x: number, y: number) => Math.abs(x - y) / Math.abs(y);
let ok = true;
for (const [name, s] of [
  ['sequential merge', sequential],
  ['pairwise-tree merge', tree],
] as const) {
  const dm = rel(s.mean, whole.mean);
  const d2 = rel(s.m2, whole.m2);
  const pass = s.n === whole.n && dm <= 1e-12 && d2 <= 1e-12;
  ok &&= pass;
  console.log(
    `summaries of ${CHUNKS.toLocaleString('en-US')} chunks, ${name}: n ${s.n === whole.n ? 'equal' : 'DIFFERS'}, ` +
      `mean rel. diff ${dm.toExponential(2)}, m2 rel. diff ${d2.toExponential(2)} → ${pass ? 'equal to 1e-12' : 'NOT equal'}`,
  );
}
if (!ok) process.exitCode = 1;
if (Number.isNaN(sink)) console.log('unexpected NaN');

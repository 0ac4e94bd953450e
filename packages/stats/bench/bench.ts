/**
 * Benchmark (not a test): time of welchT + levene(median) + hedgesG on 2 × 1 000 000 values divided by the time of a
 * plain two-pass mean/variance loop over the same arrays (the memory-bound floor), each the median of several
 * interleaved repetitions; then CR2 cluster-robust errors for 80 000 units of 25 from their per-unit moments against the
 * same floor; then the two-level model (REML, Satterthwaite df) on the same units against the same floor; then checks
 * that summarize + mergeSummaries over 10 000 chunks equals one pass.
 */
import {
  clusterRobustFromMoments,
  hedgesG,
  levene,
  mergeAllSummaries,
  mergeSummaries,
  summarize,
  twoLevelFromMoments,
  unitMomentsFromRows,
  welchT,
  type Summary,
} from '../src/index.js';

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

// CR2 cluster-robust errors at a district's shape: 80 000 classrooms of 25 students (2 000 000 rows, as many values as
// the floor's arrays), 40 schools as blocks, a pretest. The per-unit moments are built once (the API gets them from
// SQL); the timed work is clusterRobustFromMoments, interleaved with the floor.
const CR2_UNITS = 80_000;
const CR2_SIZE = 25;
const CR2_BLOCKS = 40;
const cr2Units = (() => {
  const rows = CR2_UNITS * CR2_SIZE;
  const unitEffect = scores(CR2_UNITS, 424242, 0, 4);
  const pretestNoise = scores(rows, 515151, 0, 30);
  const outcomeNoise = scores(rows, 626262, 0, 25);
  const y = new Float64Array(rows);
  const pretest = new Float64Array(rows);
  const arm = new Uint8Array(rows);
  const cluster = new Array<string>(rows);
  const block = new Array<string>(rows);
  for (let j = 0, i = 0; j < CR2_UNITS; j++) {
    // Units alternate arms within each school, so every block has both arms.
    const unitArm = Math.floor(j / CR2_BLOCKS) % 2;
    const label = `classroom-${j}`;
    const school = `school-${j % CR2_BLOCKS}`;
    for (let r = 0; r < CR2_SIZE; r++, i++) {
      pretest[i] = 250 + 0.6 * unitEffect[j] + pretestNoise[i];
      y[i] = 260 + 5 * unitArm + unitEffect[j] + 0.7 * (pretest[i] - 250) + outcomeNoise[i];
      arm[i] = unitArm;
      cluster[i] = label;
      block[i] = school;
    }
  }
  return unitMomentsFromRows({ y, arm, cluster, block, covariates: [pretest] });
})();
const cr2Run = () => {
  sink += clusterRobustFromMoments(cr2Units).se;
};
for (let i = 0; i < 3; i++) cr2Run();
const cr2Floor: number[] = [];
const cr2Times: number[] = [];
for (let r = 0; r < REPS; r++) {
  let t0 = performance.now();
  floorRun();
  cr2Floor.push(performance.now() - t0);
  t0 = performance.now();
  cr2Run();
  cr2Times.push(performance.now() - t0);
}
console.log(
  `CR2 + Pustejovsky–Tipton df, ${CR2_UNITS.toLocaleString('en-US')} units of ${CR2_SIZE}, ${CR2_BLOCKS} blocks, pretest, ` +
    `from per-unit moments: ${median(cr2Times).toFixed(2)} ms = ${(median(cr2Times) / median(cr2Floor)).toFixed(2)}× the floor`,
);

// The two-level model on the same 80 000 classrooms (p = 42 fixed effects: intercept, 39 school indicators, arm,
// pretest), from their per-unit moments as the API sends them, interleaved with the floor.
const modelRun = () => {
  sink += twoLevelFromMoments(cr2Units).se;
};
for (let i = 0; i < 3; i++) modelRun();
const modelFloor: number[] = [];
const modelTimes: number[] = [];
for (let r = 0; r < REPS; r++) {
  let t0 = performance.now();
  floorRun();
  modelFloor.push(performance.now() - t0);
  t0 = performance.now();
  modelRun();
  modelTimes.push(performance.now() - t0);
}
console.log(
  `two-level model (REML + Satterthwaite df), ${CR2_UNITS.toLocaleString('en-US')} units of ${CR2_SIZE}, ${CR2_BLOCKS} blocks, ` +
    `pretest, from per-unit moments: ${median(modelTimes).toFixed(2)} ms = ${(median(modelTimes) / median(modelFloor)).toFixed(2)}× the floor`,
);

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

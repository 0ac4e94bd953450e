import { decidingAnalysisNames, decidingTest, type DecidingTest, type RunResults } from '@evenhand/entities';
import { formatAlpha, formatInterval, formatNumber, formatPStatement, formatSigned } from '@/lib/format';

/** The registered primary test by its name in the trade. */
export const testNames: Record<RunResults['primary']['test'], string> = {
  'two-level': 'the two-level model',
  welch: 'Welch’s t test',
  student: 'Student’s pooled t test',
};

const sidedness: Record<string, string> = {
  'two-sided': 'two-sided',
  greater: 'one-sided (intervention higher)',
  less: 'one-sided (intervention lower)',
};

export const iccSourceWords: Record<NonNullable<RunResults['clustering']>['iccSource'], string> = {
  observed: 'observed in these data',
  default: 'the standard default for this kind of measure',
  assumed: 'assumed in the plan',
};

export function confidenceLabel(confidence: number): string {
  return `${formatNumber(confidence * 100, confidence * 100 === Math.round(confidence * 100) ? 0 : 1)}%`;
}

/** What the two-level model allowed for, in words: the assigned units, the blocks and the pretest. */
function modelWords(r: RunResults): string {
  const m = r.twoLevel;
  if (!m) return '';
  const parts = [`students within the ${m.unit === 'school' ? 'schools' : 'classrooms'} that were assigned`];
  if (m.blocks > 0) parts.push('the schools the draw was blocked by');
  if (m.covariate === 'baseline') parts.push('each student’s pretest');
  return parts.length === 1 ? parts[0] : `${parts.slice(0, -1).join(', ')} and ${parts[parts.length - 1]}`;
}

/** The deciding analysis's interval in words; an interval that ignores the clustering says so. */
function intervalWords(d: DecidingTest, r: RunResults): string {
  const level = confidenceLabel(d.confidence);
  const ci = d.ci;
  if (!ci) {
    const p = r.primary;
    return `${confidenceLabel(p.confidence)} interval for students assigned one by one: ${formatNumber(p.ci[0], 2)} to ${formatNumber(p.ci[1], 2)}; it ignores that students were grouped in classrooms, so it is too narrow`;
  }
  if (d.alternative === 'greater') return `${level} confidence bound: the difference is at least ${formatNumber(ci[0], 2)}`;
  if (d.alternative === 'less') return `${level} confidence bound: the difference is at most ${formatNumber(ci[1], 2)}`;
  return `${level} confidence interval for the difference: ${formatNumber(ci[0], 2)} to ${formatNumber(ci[1], 2)}`;
}

export interface Headline {
  /** What was found: direction, size in the measure's units and its interval. */
  finding: string;
  /** Which arm the difference favours, given the measure's direction; null when there is no difference to speak of. */
  favours: string | null;
  /** Whether the pre-registered test was met, at the plan's alpha and sidedness. */
  verdict: string;
  met: boolean;
  /** Which p-value decided `met`: the clustering-corrected one when classrooms or schools were assigned. */
  decidedBy: string;
  /** The clustering-corrected reading, when classrooms or schools were assigned. */
  clustering: string | null;
}

/**
 * The plain-language headline of a run, from its deciding analysis: the registered two-level model or t test, or the
 * clustering-corrected p of a t test over students in runs registered that way. Every screen, e-mail and export reads
 * the same analysis (`decidingTest`).
 */
export function resultHeadline(r: RunResults): Headline {
  const d = decidingTest(r);
  if (r.yesNo) return yesNoHeadline(r, r.yesNo, d);
  const diff = d.estimate;
  const size = formatNumber(Math.abs(diff), 2);
  const classroomMeans = d.analysis === 'classroom-means';
  const who = classroomMeans ? 'classrooms in the' : 'students in the';
  const what = classroomMeans ? 'averaged' : 'scored';
  const where = `on ${r.measure.name} at ${r.wave.name}`;
  const same = size === formatNumber(0, 2);
  const allowing = d.analysis === 'two-level' && r.twoLevel?.covariate === 'baseline' ? ', allowing for their pretest scores' : '';
  const interval = intervalWords(d, r);

  const finding = same
    ? `On average, ${who} intervention arm and ${who} comparison arm ${what} the same ${where}${allowing} (${interval}).`
    : `On average, ${who} intervention arm ${what} ${size} ${diff > 0 ? 'higher' : 'lower'} than ${who} comparison arm ${where}${allowing} (${interval}).`;

  let favours: string | null = null;
  if (!same) {
    const better = r.measure.higherIsBetter ? 'Higher' : 'Lower';
    const arm = (diff > 0) === r.measure.higherIsBetter ? 'intervention' : 'comparison';
    favours = `${better} scores are better on this measure, so the difference favours the ${arm} arm.`;
  }

  const p = r.primary;
  const test = `${testNames[p.test]}, ${sidedness[d.alternative] ?? d.alternative}, at alpha ${formatAlpha(r.alpha)}`;
  const pText = formatPStatement(d.p);
  let verdict: string;
  if (d.basis === 'clustering') {
    const corrected = `allowing for students being grouped in classrooms: clustering-corrected ${pText}, against ${formatPStatement(p.p)} had each student been assigned on their own`;
    verdict = `${d.significant ? 'This meets' : 'This does not meet'} the pre-registered test (${test}) ${corrected}.`;
  } else if (d.significant) {
    verdict = `This meets the pre-registered test (${test}): ${pText}.`;
  } else {
    const why =
      d.alternative === 'greater'
        ? 'The data do not show the intervention arm scoring higher.'
        : d.alternative === 'less'
          ? 'The data do not show the intervention arm scoring lower.'
          : 'The interval includes no difference at all.';
    verdict = `This does not meet the pre-registered test (${test}): ${pText}. ${why}`;
  }

  // The clustering correction decides only runs registered with a t test over students; otherwise it is a sensitivity check.
  let clustering: string | null = null;
  if (r.clustering && d.basis === 'clustering') {
    const c = r.clustering;
    const grouping = `Allowing for students being grouped in classrooms (ICC ${formatNumber(c.icc, 2)}, ${iccSourceWords[c.iccSource]})`;
    clustering = c.significant
      ? `${grouping}, the difference is still statistically significant: ${formatPStatement(c.p)}.`
      : `${grouping}, the difference is not statistically significant: ${formatPStatement(c.p)}.`;
  }

  let decidedBy: string;
  if (d.basis === 'clustering') {
    decidedBy = `Decided by the clustering-corrected p-value (${pText}): whole classrooms or schools were assigned to the arms but students compared, so the student-level ${formatPStatement(p.p)} overstates the evidence.`;
  } else if (d.analysis === 'two-level') {
    decidedBy = `Decided by the two-level model as registered (${pText}), which allows for ${modelWords(r)}.`;
  } else {
    decidedBy = `Decided by the p-value of ${decidingAnalysisNames[d.analysis]} as registered (${pText}).`;
  }
  return { finding, favours, verdict, met: d.significant, decidedBy, clustering };
}


/**
 * The effect size that travels with a p-value: Hedges' g with its interval for a score; for a yes/no measure the Cox
 * index with its improvement index (the standard's effect size for yes/no outcomes), or, when an arm answered all yes or
 * all no and the Cox index is undefined, the difference in percentage points with its interval.
 */
export function effectSizeWords(r: RunResults): string {
  const y = r.yesNo;
  if (!y) {
    const e = r.effectSize;
    return `Hedges’ g = ${formatNumber(e.g, 2)} (95% CI ${formatInterval(e.ci, 2)}); improvement index ${formatSigned(e.improvementIndex, 1)} percentile points`;
  }
  if (y.coxIndex) return `Cox index = ${formatNumber(y.coxIndex.value, 2)}; improvement index ${formatSigned(y.coxIndex.improvementIndex, 1)} percentile points`;
  const ci = y.difference.ci;
  return `difference ${formatSigned(y.difference.estimate * 100, 1)} percentage points (${confidenceLabel(y.confidence)} CI ${formatInterval([ci[0] * 100, ci[1] * 100], 1)}; the Cox index is undefined when an arm answered all yes or all no)`;
}

/** A proportion as a whole percent: 0.423 → "42 %". */
export const formatPercent = (fraction: number) => `${formatNumber(fraction * 100, 0)} %`;

/** A difference in proportions in percentage points: 0.0712 → "7.1". */
const points = (fraction: number) => formatNumber(fraction * 100, 1);

/**
 * The headline of a yes/no measure: "42 % of intervention students met …, against 35 % of comparison students", the
 * difference in percentage points with the deciding analysis's interval, and the verdict of that analysis.
 */
function yesNoHeadline(r: RunResults, y: NonNullable<RunResults['yesNo']>, d: DecidingTest): Headline {
  const [i, c] = [y.arms.find((a) => a.arm === 'intervention')!, y.arms.find((a) => a.arm === 'comparison')!];
  const where = `“${r.measure.name}” at ${r.wave.name}`;
  const diff = d.estimate;
  const same = points(Math.abs(diff)) === points(0);
  const level = confidenceLabel(d.confidence);
  const ci = d.ci;
  const interval = !ci
    ? 'no interval'
    : d.alternative === 'greater' && ci[1] === null
      ? `${level} confidence bound: at least ${points(ci[0]!)} points`
      : d.alternative === 'less' && ci[0] === null
        ? `${level} confidence bound: at most ${points(ci[1]!)} points`
        : `${level} confidence interval: ${points(ci[0]!)} to ${points(ci[1]!)} points`;
  const finding =
    `${formatPercent(i.proportion)} of intervention students answered yes to ${where}, against ${formatPercent(c.proportion)} of comparison students` +
    (same ? `: no difference (${interval}).` : `: ${points(Math.abs(diff))} percentage points ${diff > 0 ? 'more' : 'fewer'} (${interval}).`);
  const favours = same
    ? null
    : `“${y.yesIsGood ? 'Yes' : 'No'}” is the good answer on this measure, so the difference favours the ${(diff > 0) === y.yesIsGood ? 'intervention' : 'comparison'} arm.`;
  const test = `${decidingAnalysisNames[d.analysis]}, ${sidedness[d.alternative] ?? d.alternative}, at alpha ${formatAlpha(r.alpha)}`;
  const pText = formatPStatement(d.p);
  const verdict = d.significant
    ? `This meets the pre-registered test (${test}): ${pText}.`
    : `This does not meet the pre-registered test (${test}): ${pText}.${ci && ci[0] !== null && ci[1] !== null && ci[0] <= 0 && ci[1] >= 0 ? ' The interval includes no difference at all.' : ''}`;
  const decidedBy =
    d.analysis === 'linear-probability'
      ? `Decided by ${decidingAnalysisNames[d.analysis]} (${pText}), which allows for students being grouped in the classrooms or schools that were assigned.`
      : `Decided by ${decidingAnalysisNames[d.analysis]} (${pText}).`;
  let clustering: string | null = null;
  if (y.designEffect) {
    const e = y.designEffect;
    clustering = `Sensitivity check: with the difference’s variance inflated by the design effect ${formatNumber(e.designEffect, 2)} (ICC ${formatNumber(e.icc, 2)}, ${e.iccSource === 'observed' ? 'observed in these data' : 'the standard default for this kind of measure'}), ${formatPStatement(e.p)}.`;
  }
  return { finding, favours, verdict, met: d.significant, decidedBy, clustering };
}

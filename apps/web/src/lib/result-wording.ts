import { decidingTest, type RunResults } from '@evenhand/entities';
import { formatAlpha, formatNumber, formatPStatement } from '@/lib/format';

export const testNames: Record<RunResults['primary']['test'], string> = {
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
 * The plain-language headline of a run: the primary result as the plan registered it. `unit` says whether
 * students or classroom averages were compared (the comparison's unit of analysis).
 */
export function resultHeadline(r: RunResults, unit: 'student' | 'classroom' | 'school' = 'student'): Headline {
  const p = r.primary;
  const diff = p.meanDifference;
  const size = formatNumber(Math.abs(diff), 2);
  const who = unit === 'student' ? 'students in the' : 'classrooms in the';
  const what = unit === 'student' ? 'scored' : 'averaged';
  const level = confidenceLabel(p.confidence);
  const where = `on ${r.measure.name} at ${r.wave.name}`;
  const same = size === formatNumber(0, 2);

  let interval: string;
  if (p.alternative === 'greater') interval = `${level} confidence bound: the difference is at least ${formatNumber(p.ci[0], 2)}`;
  else if (p.alternative === 'less') interval = `${level} confidence bound: the difference is at most ${formatNumber(p.ci[1], 2)}`;
  else interval = `${level} confidence interval for the difference: ${formatNumber(p.ci[0], 2)} to ${formatNumber(p.ci[1], 2)}`;

  const finding = same
    ? `On average, ${who} intervention arm and ${who} comparison arm ${what} the same ${where} (${interval}).`
    : `On average, ${who} intervention arm ${what} ${size} ${diff > 0 ? 'higher' : 'lower'} than ${who} comparison arm ${where} (${interval}).`;

  let favours: string | null = null;
  if (!same) {
    const better = r.measure.higherIsBetter ? 'Higher' : 'Lower';
    const arm = (diff > 0) === r.measure.higherIsBetter ? 'intervention' : 'comparison';
    favours = `${better} scores are better on this measure, so the difference favours the ${arm} arm.`;
  }

  const test = `${testNames[p.test]}, ${sidedness[p.alternative] ?? p.alternative}, at alpha ${formatAlpha(r.alpha)}`;
  const pText = formatPStatement(p.p);
  const decision = decidingTest(r);
  let verdict: string;
  if (decision.basis === 'clustering') {
    const corrected = `allowing for students being grouped in classrooms: clustering-corrected ${formatPStatement(decision.p)}, against ${pText} had each student been assigned on their own`;
    verdict = `${decision.significant ? 'This meets' : 'This does not meet'} the pre-registered test (${test}) ${corrected}.`;
  } else if (p.significant) {
    verdict = `This meets the pre-registered test (${test}): ${pText}.`;
  } else {
    const why =
      p.alternative === 'greater'
        ? 'The data do not show the intervention arm scoring higher.'
        : p.alternative === 'less'
          ? 'The data do not show the intervention arm scoring lower.'
          : 'The interval includes no difference at all.';
    verdict = `This does not meet the pre-registered test (${test}): ${pText}. ${why}`;
  }

  let clustering: string | null = null;
  if (r.clustering) {
    const c = r.clustering;
    const grouping = `Allowing for students being grouped in classrooms (ICC ${formatNumber(c.icc, 2)}, ${iccSourceWords[c.iccSource]})`;
    clustering = c.significant
      ? `${grouping}, the difference is still statistically significant: ${formatPStatement(c.p)}.`
      : `${grouping}, the difference is not statistically significant: ${formatPStatement(c.p)}.`;
  }

  const decidedBy =
    decision.basis === 'clustering'
      ? `Decided by the clustering-corrected p-value (${formatPStatement(decision.p)}): whole classrooms or schools were assigned to the arms but students compared, so the student-level ${pText} overstates the evidence.`
      : `Decided by the p-value of ${testNames[p.test]} as registered (${pText}).`;
  return { finding, favours, verdict, met: decision.significant, decidedBy, clustering };
}

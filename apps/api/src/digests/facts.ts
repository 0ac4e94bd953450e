import type { EntityManager } from 'typeorm';
import { SUPPRESSED_WORDS, decidingAnalysisNames, decidingTest, type Arm, type RunResults, type SiteFacts, type SiteResult } from '@evenhand/entities';
import { AppError } from '../errors.js';
import { lockedRunsSql, siteArmsSql, siteSheetsSql, studySiteSql, waveStatusSql, type LockedRunRow, type SiteArmRow, type SiteSheetRow, type StudySiteRow, type WaveStatusRow } from './queries.js';
import { countWords, formatAlpha, formatNumber, formatPStatement, formatSigned, suppressCounts } from './wording.js';

const sidedness: Record<string, string> = { 'two-sided': 'two-sided', greater: 'one-sided', less: 'one-sided' };
const armOrder = (arm: Arm | null) => (arm === 'intervention' ? 0 : arm === 'comparison' ? 1 : 2);

/** The plain-language result a principal reads, from the run's own numbers. */
export function resultSentences(r: RunResults, favours: SiteResult['district']['favours']): string[] {
  if (r.yesNo) return yesNoSentences(r, r.yesNo, favours);
  // A district arm under the minimum: g, its interval and p could give its size back, so only the direction and the verdict.
  if (suppressCounts(r.descriptives.map((d) => d.students)).hidden) {
    const d = decidingTest(r);
    const test = `${decidingAnalysisNames[d.analysis]}, ${sidedness[d.alternative] ?? d.alternative}, at alpha ${formatAlpha(r.alpha)}`;
    const side = favours === 'neither' ? 'about the same in both groups' : `in favour of the ${favours}`;
    return [
      `Across all schools in the study, the result on ${r.measure.name} at ${r.wave.name} came out ${side}; its size is not shown, since a group has ${SUPPRESSED_WORDS} and the size would reveal how many.`,
      `${d.significant ? 'It meets' : 'It does not meet'} the test registered in the plan before the data were in (${test}); its p-value is not shown either.`,
    ];
  }
  const g = r.effectSize.g;
  const where = `on ${r.measure.name} at ${r.wave.name}`;
  const same = formatNumber(g, 2) === formatNumber(0, 2);
  const finding = same
    ? `Across all schools in the study, students in intervention classrooms and students in comparison classrooms scored about the same ${where}.`
    : `Across all schools in the study, students in intervention classrooms scored ${g > 0 ? 'higher' : 'lower'} ${where} than students in comparison classrooms. ${
        r.measure.higherIsBetter ? 'Higher' : 'Lower'
      } scores are better on this measure, so the difference favours the ${favours === 'intervention' ? 'intervention' : 'comparison'}.`;
  const ii = r.effectSize.improvementIndex;
  const iiWords = formatSigned(ii, 0);
  const rank =
    formatNumber(ii, 0) === '0'
      ? 'an average student in comparison classrooms would be expected to rank about the same with the intervention'
      : `an average student in comparison classrooms would be expected to rank about ${formatNumber(Math.abs(ii), 0)} percentile points ${ii > 0 ? 'higher' : 'lower'} with the intervention`;
  const size = `The size of the difference is Hedges’ g = ${formatNumber(g, 2)} (95% interval ${formatNumber(r.effectSize.ci[0], 2)} to ${formatNumber(r.effectSize.ci[1], 2)}), an improvement index of ${iiWords}: ${rank}. ${
    r.effectSize.substantivelyImportant
      ? 'That is at least the 0.25 the published evidence standard counts as substantively important.'
      : 'That is below the 0.25 the published evidence standard counts as substantively important.'
  }`;
  const d = decidingTest(r);
  const test = `${decidingAnalysisNames[d.analysis]}, ${sidedness[d.alternative] ?? d.alternative}, at alpha ${formatAlpha(r.alpha)}`;
  const verdict = `${d.significant ? 'It meets' : 'It does not meet'} the test registered in the plan before the data were in (${test}): ${formatPStatement(d.p)}. A p-value is not the size of the effect: read it with g and its interval.`;
  return [finding, size, verdict];
}

/**
 * A yes/no measure in a principal's words: the share of each arm answering yes (only while no yes or no count of the
 * district is under the minimum), the difference in percentage points, the Cox index and the deciding test.
 */
function yesNoSentences(r: RunResults, y: NonNullable<RunResults['yesNo']>, favours: SiteResult['district']['favours']): string[] {
  const [i, c] = [y.arms.find((a) => a.arm === 'intervention')!, y.arms.find((a) => a.arm === 'comparison')!];
  const pct = (x: number) => `${formatNumber(x * 100, 0)} %`;
  const where = `“${r.measure.name}” at ${r.wave.name}`;
  const hidden = y.arms.some((a) => suppressCounts([a.yes, a.no]).hidden);
  const d = decidingTest(r);
  const points = formatNumber(Math.abs(d.estimate) * 100, 1);
  const good = `“${y.yesIsGood ? 'Yes' : 'No'}” is the good answer on this measure`;
  const finding = hidden
    ? `Across all schools in the study, the share of each group answering yes to ${where} is not shown: a group has ${SUPPRESSED_WORDS} answering yes or no.`
    : favours === 'neither'
      ? `Across all schools in the study, ${pct(i.proportion)} of students in intervention classrooms answered yes to ${where}, against ${pct(c.proportion)} in comparison classrooms: about the same.`
      : `Across all schools in the study, ${pct(i.proportion)} of students in intervention classrooms answered yes to ${where}, against ${pct(c.proportion)} in comparison classrooms: ${points} percentage points ${d.estimate > 0 ? 'more' : 'fewer'}. ${good}, so the difference favours the ${favours}.`;
  const cox = y.coxIndex;
  const undefinedCox = y.notComputed?.find((n) => n.statistic.startsWith('Cox index'));
  const size = cox
    ? `The size of the difference is a Cox index of ${formatNumber(cox.value, 2)} (the published evidence standard's effect size for yes/no outcomes), an improvement index of ${formatSigned(cox.improvementIndex, 0)}. ${
        cox.substantivelyImportant ? 'That is at least the 0.25 the standard counts as substantively important.' : 'That is below the 0.25 the standard counts as substantively important.'
      }`
    : `The Cox index, the published evidence standard's effect size for yes/no outcomes, is not given: ${undefinedCox ? undefinedCox.why.replace(/^Undefined: /, '') : 'an arm answered all yes or all no'}. Read the difference in percentage points instead.`;
  const test = `${decidingAnalysisNames[d.analysis]}, ${sidedness[d.alternative] ?? d.alternative}, at alpha ${formatAlpha(r.alpha)}`;
  const verdict = hidden
    ? `${d.significant ? 'It meets' : 'It does not meet'} the test registered in the plan before the data were in (${test}); its p-value is not shown, since with it the hidden counts could be worked out.`
    : `${d.significant ? 'It meets' : 'It does not meet'} the test registered in the plan before the data were in (${test}): ${formatPStatement(d.p)}. A p-value is not the size of the effect: read it with ${cox ? 'the Cox index' : 'the difference in percentage points'}.`;
  return hidden ? [finding, verdict] : [finding, size, verdict];
}

/** A school's yes/no share reveals its yes count (share × students): shown only when both that count and the no count may be. */
const yesNoShareShown = (mean: number, n: number) => !suppressCounts([Math.round(mean * n), n - Math.round(mean * n)]).hidden;

/** One locked run as a principal of `siteId` reads it (exported for tests). */
export function siteResult(run: LockedRunRow, siteId: string): SiteResult {
  const r = run.results;
  const g = r.effectSize.g;
  const deciding = decidingTest(r);
  // A yes/no result favours an arm by its difference in percentage points (to one decimal, as worded), a score by g.
  const y = r.yesNo;
  const same = y ? formatNumber(deciding.estimate * 100, 1) === formatNumber(0, 1) : formatNumber(g, 2) === formatNumber(0, 2);
  const favours: SiteResult['district']['favours'] = same ? 'neither' : ((y ? deciding.estimate : g) > 0) === r.measure.higherIsBetter ? 'intervention' : 'comparison';
  const answers = y ? y.arms.map((a) => suppressCounts([a.yes, a.no])) : [];
  const districtCounts = suppressCounts(r.descriptives.map((d) => d.students));
  // As in the principal view: a hidden district count hides every figure it could be worked back from.
  const hidden = districtCounts.hidden || answers.some((a) => a.hidden);
  const districtStudents = districtCounts.total;
  const own = r.sites.find((s) => s.siteId === siteId);
  let site: SiteResult['site'] = null;
  if (own) {
    const counts = suppressCounts([own.n1, own.n2]);
    const shares = !r.yesNo || (yesNoShareShown(own.mean1, own.n1) && yesNoShareShown(own.mean2, own.n2));
    site = {
      arms: [
        { arm: 'intervention', students: counts.cells[0], mean: counts.cells[0].suppressed || !shares ? null : own.mean1 },
        { arm: 'comparison', students: counts.cells[1], mean: counts.cells[1].suppressed || !shares ? null : own.mean2 },
      ],
      totalStudents: counts.total,
      note: counts.hidden
        ? `Your school’s figures for each group are not shown: one group has ${SUPPRESSED_WORDS}, and showing the other would reveal it.`
        : 'One school’s figures are too few to judge the practice by; the result for all schools together is the one the study was designed to answer.',
    };
  }
  return {
    runId: run.id,
    label: run.label,
    measureName: r.measure.name,
    waveName: r.wave.name,
    isPrimary: run.is_primary,
    lockedAt: new Date(run.locked_at).toISOString(),
    district: {
      g: hidden ? null : g,
      gCi: hidden ? null : r.effectSize.ci,
      improvementIndex: hidden ? null : r.effectSize.improvementIndex,
      substantivelyImportant: !hidden && (y ? !!y.coxIndex?.substantivelyImportant : r.effectSize.substantivelyImportant),
      favours,
      analysis: deciding.analysis,
      estimate: hidden ? null : deciding.estimate,
      p: hidden ? null : deciding.p,
      ci: hidden ? null : deciding.ci,
      confidence: deciding.confidence,
      alpha: r.alpha,
      alternative: deciding.alternative,
      met: deciding.significant,
      students: districtStudents,
      classrooms: r.descriptives.reduce((t, d) => t + d.classrooms, 0),
    },
    yesNo: y
      ? {
          yesIsGood: y.yesIsGood,
          arms: y.arms.map((a, i) => ({ arm: a.arm, yes: answers[i].cells[0], no: answers[i].cells[1], proportion: hidden ? null : a.proportion })),
          coxIndex: !hidden && y.coxIndex ? { value: y.coxIndex.value, improvementIndex: y.coxIndex.improvementIndex } : null,
        }
      : null,
    sentences: resultSentences(r, favours),
    // The verdict's final wording as stored at the lock: the report's headline for this result, and no counts.
    evidence: run.evidence ?? null,
    site,
  };
}

/**
 * Everything a principal is told about one school in one study, with small cells suppressed. The digest
 * e-mail and the My school page are both built from this, so they always say the same thing.
 * Reads through the caller's manager, so inside a lock it sees the run as locked.
 */
export async function buildSiteFacts(manager: EntityManager, studyId: string, siteId: string): Promise<SiteFacts> {
  const [study]: StudySiteRow[] = await manager.query(studySiteSql, [studyId, siteId]);
  if (!study) throw AppError.notFound('The school in this study');

  const armRows: SiteArmRow[] = await manager.query(siteArmsSql, [studyId, siteId]);
  armRows.sort((a, b) => armOrder(a.arm) - armOrder(b.arm));
  const counts = suppressCounts(armRows.map((a) => a.students));

  const waves: WaveStatusRow[] = await manager.query(waveStatusSql, [studyId]);
  const sheets: SiteSheetRow[] = await manager.query(siteSheetsSql, [studyId, siteId]);
  const runs: LockedRunRow[] = await manager.query(lockedRunsSql, [studyId]);
  const results = runs.map((run) => siteResult(run, siteId));

  const cautions: string[] = [];
  const anyHidden = counts.hidden || results.some((r) => r.site?.arms.some((a) => a.students.suppressed) || r.site?.totalStudents.suppressed);
  if (results.length) {
    const sizes = results.some((r) => r.yesNo) ? (results.every((r) => r.yesNo) ? 'the effect size (the Cox index)' : 'the effect size (Hedges’ g for scores, the Cox index for yes/no answers)') : 'the effect size (Hedges’ g) and its interval';
    cautions.push(`A p-value is not the size or the importance of an effect: ${sizes} ${sizes.endsWith('interval') ? 'are' : 'is'} given beside it.`);
  }
  cautions.push('These figures describe groups of students, never individual students or teachers: they are not for evaluating teachers or for placing students.');
  if (results.some((r) => runs.find((x) => x.id === r.runId)!.results.cautions.some((c) => c.startsWith('The samples are small')))) {
    cautions.push('The samples are small: the estimate is imprecise and conclusions are limited.');
  }
  if (study.quasi_experimental) {
    cautions.push('Classrooms were not all assigned at random (the draw was changed by hand), so the result shows a difference between groups, not necessarily what the practice caused.');
  }
  if (anyHidden) cautions.push(`To protect students’ privacy, any figure based on ${SUPPRESSED_WORDS} is not shown.`);
  cautions.push('Student records are protected by law and district policy: follow your district’s data-privacy rules and its research review board before sharing these figures.');

  return {
    generatedAt: new Date().toISOString(),
    study: {
      id: study.id,
      title: study.title,
      intervention: study.intervention,
      comparisonCondition: study.comparison_condition,
      status: study.status,
      unitOfAssignment: study.unit_of_assignment,
      quasiExperimental: study.quasi_experimental,
    },
    site: { id: siteId, name: study.site_name },
    participation: {
      arms: armRows.map((a, i) => ({ arm: a.arm, classrooms: a.classrooms, students: counts.cells[i] })),
      classrooms: armRows.reduce((t, a) => t + a.classrooms, 0),
      students: counts.total,
      note: counts.hidden
        ? counts.total.suppressed
          ? `Student numbers are not shown: your school has ${SUPPRESSED_WORDS} with scores so far.`
          : `Student numbers by group are not shown: one group has ${SUPPRESSED_WORDS}, and showing the other would reveal it. Your school has ${countWords(counts.total)} in all.`
        : null,
    },
    waves: waves.map((w) => {
      const mine = sheets.filter((s) => s.wave_id === w.id);
      const accepted = mine.filter((s) => s.state === 'accepted').length;
      const submitted = mine.filter((s) => s.state === 'submitted').length;
      return {
        id: w.id,
        name: w.name,
        kind: w.kind,
        opensOn: w.opens_on,
        closesOn: w.closes_on,
        status: w.status,
        sheets: mine.length,
        accepted,
        submitted,
        waiting: mine.length - accepted - submitted,
        percentAccepted: mine.length ? (100 * accepted) / mine.length : 0,
      };
    }),
    late: waves
      .filter((w) => w.status === 'closed')
      .flatMap((w) =>
        sheets
          .filter((s) => s.wave_id === w.id && (s.state === 'open' || s.state === 'returned'))
          .map((s) => ({ classroomName: s.classroom_name, waveName: w.name, measureName: s.measure_name, returned: s.state === 'returned', closedOn: w.closes_on })),
      ),
    results,
    cautions,
  };
}

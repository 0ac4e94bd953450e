import { decidingTest, type PrincipalRun, type PrincipalRunResults, type Run } from '@evenhand/entities';
import { suppressCounts } from '../digests/wording.js';

/**
 * What a principal sees of a locked run: built field by field from this allow-list, never by removing fields from
 * the full result, so a field added to the results later stays hidden until it is added here on purpose.
 *
 * Complementary suppression: counts go through `suppressCounts` (MIN_REPORTED_STUDENTS). While any arm's count is
 * hidden, so are every arm's mean and SD, the estimate (a difference of means), its interval and p and the effect
 * size: with estimate, interval and p one can solve for the test's degrees of freedom, hence the total count. Degrees
 * of freedom, flow counts, diagnostics (the Shapiro–Wilk n, the variance-ratio df), sensitivity checks and other
 * schools' figures are never shown. Before adding a field, check it reveals no hidden count or mean with the rest.
 */
const hiddenCount = { value: null, suppressed: true } as const;

export function principalView(run: Run, ownSiteIds: readonly string[]): PrincipalRun {
  const r = run.results;
  const base = { id: run.id, comparisonId: run.comparisonId, studyId: run.studyId, kind: run.kind, state: run.state, planVersion: run.planVersion, engineVersion: run.engineVersion, lockedAt: run.lockedAt };
  if (!r) return { ...base, results: null, multiplicity: null };
  const counts = suppressCounts(r.descriptives.map((d) => d.students));
  // A yes/no measure: each arm's yes and no counts are cells too; a hidden one hides everything a count follows from.
  const answers = r.yesNo ? r.yesNo.arms.map((a) => suppressCounts([a.yes, a.no])) : [];
  const shown = !counts.hidden && !answers.some((a) => a.hidden);
  const yesNoSite = (mean: number, n: number) => {
    const yes = Math.round(mean * n);
    return !suppressCounts([yes, n - yes]).hidden;
  };
  // A school's yes/no means give its yes counts (mean × n), so both arms' counts must show as well.
  const siteShown = (s: { n1: number; n2: number; mean1: number; mean2: number }) =>
    !suppressCounts([s.n1, s.n2]).hidden && (!r.yesNo || (yesNoSite(s.mean1, s.n1) && yesNoSite(s.mean2, s.n2)));
  const deciding = decidingTest(r);
  const results: PrincipalRunResults = {
    measure: { name: r.measure.name, higherIsBetter: r.measure.higherIsBetter },
    wave: { name: r.wave.name },
    alpha: r.alpha,
    deciding: {
      analysis: deciding.analysis,
      significant: deciding.significant,
      confidence: deciding.confidence,
      alternative: deciding.alternative,
      estimate: shown ? deciding.estimate : null,
      ci: shown ? deciding.ci : null,
      p: shown ? deciding.p : null,
    },
    effectSize: shown ? { g: r.effectSize.g, ci: r.effectSize.ci, improvementIndex: r.effectSize.improvementIndex } : null,
    arms: r.descriptives.map((d, i) => ({ arm: d.arm, students: counts.cells[i], mean: shown ? d.mean : null, sd: shown ? d.sd : null })),
    sites: r.sites
      .filter((s) => ownSiteIds.includes(s.siteId) && siteShown(s))
      .map((s) => ({ siteId: s.siteId, siteName: s.siteName, n1: s.n1, n2: s.n2, mean1: s.mean1, mean2: s.mean2, g: s.g, ci: s.ci })),
    // Only a yes/no run has the field.
    ...(r.yesNo
      ? {
          yesNo: {
            yesIsGood: r.yesNo.yesIsGood,
            arms: r.yesNo.arms.map((a, i) => ({ arm: a.arm, yes: shown ? answers[i].cells[0] : hiddenCount, no: shown ? answers[i].cells[1] : hiddenCount, proportion: shown ? a.proportion : null })),
            coxIndex: shown && r.yesNo.coxIndex ? { value: r.yesNo.coxIndex.value, improvementIndex: r.yesNo.coxIndex.improvementIndex } : null,
          },
        }
      : {}),
    suppressed: !shown || r.sites.some((s) => ownSiteIds.includes(s.siteId) && !siteShown(s)),
  };
  // The verdict after Benjamini–Hochberg, without the adjusted p (it follows from p).
  return { ...base, results, multiplicity: run.multiplicity ? { rejected: run.multiplicity.rejected } : null };
}

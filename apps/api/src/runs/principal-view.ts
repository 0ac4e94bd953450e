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
export function principalView(run: Run, ownSiteIds: readonly string[]): PrincipalRun {
  const r = run.results;
  const base = { id: run.id, comparisonId: run.comparisonId, studyId: run.studyId, kind: run.kind, state: run.state, planVersion: run.planVersion, engineVersion: run.engineVersion, lockedAt: run.lockedAt };
  if (!r) return { ...base, results: null, multiplicity: null };
  const counts = suppressCounts(r.descriptives.map((d) => d.students));
  const shown = !counts.hidden;
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
      .filter((s) => ownSiteIds.includes(s.siteId) && !suppressCounts([s.n1, s.n2]).hidden)
      .map((s) => ({ siteId: s.siteId, siteName: s.siteName, n1: s.n1, n2: s.n2, mean1: s.mean1, mean2: s.mean2, g: s.g, ci: s.ci })),
    suppressed: counts.hidden || r.sites.some((s) => ownSiteIds.includes(s.siteId) && suppressCounts([s.n1, s.n2]).hidden),
  };
  // The verdict after Benjamini–Hochberg, without the adjusted p (it follows from p).
  return { ...base, results, multiplicity: run.multiplicity ? { rejected: run.multiplicity.rejected } : null };
}

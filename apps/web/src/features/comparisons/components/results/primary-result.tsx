import { decidingTest, type Run, type RunResults } from '@evenhand/entities';
import { Badge } from '@/components/ui/badge';
import { formatAlpha, formatCount, formatInterval, formatNumber, formatPStatement, formatSigned } from '@/lib/format';
import { confidenceLabel, effectSizeWords, iccSourceWords, resultHeadline, testNames } from '@/lib/result-wording';
import { YesNoFigures } from '@/features/comparisons/components/results/yes-no-result';

/** The effect size with its interval or improvement index (Hedges' g; the Cox index for yes/no): shown beside every p-value of the page. */
export function EffectSize({ results }: { results: RunResults }) {
  return <>{effectSizeWords(results)}</>;
}

/** The plain-language headline, then the primary test as registered, with its effect size beside it. */
export function PrimaryResult({ results }: { results: RunResults }) {
  const h = resultHeadline(results);
  const p = results.primary;
  const e = results.effectSize;
  return (
    // min-w-0: as a grid item it would otherwise widen to its widest table, and the page would scroll sideways on a phone.
    <section aria-labelledby="primary-result" className="min-w-0 rounded-lg border border-accent/50 bg-surface p-6">
      <div className="flex flex-wrap items-center gap-3">
        <h3 id="primary-result" className="text-xl font-semibold">
          The primary result
        </h3>
        <Badge tone={h.met ? 'accent' : 'muted'}>{h.met ? 'Meets the pre-registered test' : 'Does not meet the pre-registered test'}</Badge>
      </div>
      <p className="mt-1 text-sm text-ink-muted" data-testid="decided-by">
        {h.decidedBy}
      </p>
      <p className="mt-3 max-w-prose text-xl leading-snug" data-testid="headline">
        {h.finding}
      </p>
      {h.favours && <p className="mt-2 max-w-prose">{h.favours}</p>}
      <p className="mt-2 max-w-prose font-semibold">{h.verdict}</p>
      {h.clustering && <p className="mt-2 max-w-prose">{h.clustering}</p>}

      {results.yesNo ? (
        <YesNoFigures results={results} />
      ) : (
        <div className="mt-5 grid gap-4 md:grid-cols-2">
          {results.twoLevel && p.test === 'two-level' ? (
            <TwoLevelFigures results={results} model={results.twoLevel} />
          ) : (
            <div className="rounded-md bg-sunken px-4 py-3">
              <p className="text-sm font-semibold text-ink-muted">{testNames[p.test]}, as registered</p>
              <p className="mt-1 tabular-nums" data-testid="primary-test">
                t = {formatNumber(p.t, 2)}, df = {formatNumber(p.df, 1)}, {formatPStatement(p.p)}; difference {formatSigned(p.meanDifference, 2)} (
                {confidenceLabel(p.confidence)} CI {formatInterval(p.ci, 2)})
              </p>
              <p className="mt-1 text-sm text-ink-muted">
                Alpha {formatAlpha(results.alpha)}, {p.alternative === 'two-sided' ? 'two-sided' : `one-sided (${p.alternative})`}.
              </p>
            </div>
          )}
          <div className="rounded-md bg-sunken px-4 py-3">
            <p className="text-sm font-semibold text-ink-muted">Effect size</p>
            <p className="mt-1 tabular-nums" data-testid="effect-size">
              <EffectSize results={results} />
            </p>
            <p className="mt-1 text-sm text-ink-muted">
              {e.substantivelyImportant
                ? 'At least 0.25 standard deviations: large enough to count as substantively important, whatever the p-value.'
                : 'Smaller than 0.25 standard deviations, the usual mark of a substantively important effect.'}
            </p>
          </div>
        </div>
      )}
    </section>
  );
}

/** The two-level model's estimate, test and variance components, as registered. */
function TwoLevelFigures({ results, model: m }: { results: RunResults; model: NonNullable<RunResults['twoLevel']> }) {
  const unitWord = m.unit === 'school' ? 'schools' : 'classrooms';
  return (
    <div className="rounded-md bg-sunken px-4 py-3">
      <p className="text-sm font-semibold text-ink-muted">The two-level model, as registered</p>
      <p className="mt-1 tabular-nums" data-testid="primary-test">
        Difference {formatSigned(m.estimate, 2)} ({confidenceLabel(m.confidence)} CI {formatInterval(m.ci, 2)}); t = {formatNumber(m.t, 2)}, df ={' '}
        {formatNumber(m.df, 1)}, {formatPStatement(m.p)}
      </p>
      <p className="mt-1 text-sm text-ink-muted">
        {formatCount(m.units.intervention)} intervention and {formatCount(m.units.comparison)} comparison {unitWord}, {formatCount(m.students)}{' '}
        students{m.blocks > 0 ? `, ${formatCount(m.blocks)} schools as blocks` : ''}
        {m.covariate === 'baseline' ? ', adjusted for the pretest' : ''}. Between-{m.unit} variance {formatNumber(m.tau2, 2)}, within{' '}
        {formatNumber(m.sigma2, 2)} (ICC {formatNumber(m.icc, 2)}); degrees of freedom by Satterthwaite’s method. Alpha{' '}
        {formatAlpha(results.alpha)}, {m.alternative === 'two-sided' ? 'two-sided' : `one-sided (${m.alternative})`}.
      </p>
      {m.boundary && (
        <p className="mt-1 text-sm text-ink-muted">
          The {unitWord} varied no more than their students would by chance (between-{m.unit} variance estimated at 0).
        </p>
      )}
    </div>
  );
}

/** The clustering-corrected significance, when it decides: a run registered with a t test over students in a cluster-assigned study. */
export function ClusteringResult({ results }: { results: RunResults }) {
  const c = results.clustering;
  if (!c || decidingTest(results).basis !== 'clustering') return null;
  return (
    <section aria-labelledby="clustering" className="space-y-2">
      <h3 id="clustering" className="text-xl font-semibold">
        Allowing for classrooms
      </h3>
      <p className="max-w-prose text-ink-muted">
        Classrooms were assigned to the arms, but students were compared. Students in one classroom resemble each other, so the plain t
        test overstates the evidence; this correction (Hedges, 2007) widens it by the intraclass correlation (ICC). The effect size itself is
        unchanged.
      </p>
      <p className="tabular-nums" data-testid="clustering">
        Clustering-corrected: t = {formatNumber(c.tAdjusted, 2)}, degrees of freedom (Hedges’ h) {formatNumber(c.df, 1)}, {formatPStatement(c.p)} —{' '}
        {c.significant ? 'statistically significant' : 'not statistically significant'} at alpha {formatAlpha(results.alpha)}; <EffectSize results={results} />.
      </p>
      <p className="text-sm text-ink-muted">
        ICC {formatNumber(c.icc, 2)}, {iccSourceWords[c.iccSource]}
        {c.observedIcc !== null && c.iccSource !== 'observed' ? ` (observed in these data: ${formatNumber(c.observedIcc, 2)})` : ''}; average
        classroom size {formatNumber(c.averageClusterSize, 1)}; design effect {formatNumber(c.designEffect, 2)}.
      </p>
    </section>
  );
}

/** Benjamini–Hochberg across the study's confirmatory comparisons; monitoring runs have none. */
export function MultiplicityResult({ run }: { run: Run }) {
  if (run.kind !== 'confirmatory' || !run.multiplicity || !run.results) return null;
  const m = run.multiplicity;
  return (
    <section aria-labelledby="multiplicity" className="space-y-2">
      <h3 id="multiplicity" className="text-xl font-semibold">
        Across the study’s confirmatory comparisons
      </h3>
      <p className="tabular-nums" data-testid="multiplicity">
        Benjamini–Hochberg adjusted {formatPStatement(m.adjustedP)} across {m.comparisons} confirmatory{' '}
        {m.comparisons === 1 ? 'comparison' : 'comparisons'} —{' '}
        {m.rejected ? `still significant at alpha ${formatAlpha(run.results.alpha)}` : `not significant at alpha ${formatAlpha(run.results.alpha)} once adjusted`}
        ; <EffectSize results={run.results} />.
      </p>
      <p className="max-w-prose text-sm text-ink-muted">
        Testing several measures raises the chance that one looks significant by luck. The adjustment controls the share of false
        discoveries among the study’s confirmatory comparisons, using each one’s locked (else latest finished) confirmatory run.
      </p>
    </section>
  );
}

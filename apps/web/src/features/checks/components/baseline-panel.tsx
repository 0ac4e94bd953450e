import type { MeasureChecks } from '@evenhand/entities';
import { Badge } from '@/components/ui/badge';
import { formatCount, formatInterval, formatNumber } from '@/lib/format';

type Band = NonNullable<MeasureChecks['baselineEquivalence']>['band'];

const bandBadges: Record<Band, { tone: 'accent' | 'caution'; label: string }> = {
  satisfies: { tone: 'accent', label: 'Equivalent at baseline' },
  'requires-adjustment': { tone: 'caution', label: 'Equivalent only with adjustment' },
  fails: { tone: 'caution', label: 'Not equivalent at baseline' },
};

function bandRequirements(adjustedInPlan: boolean): { band: Band; range: string; requires: string }[] {
  return [
    { band: 'satisfies', range: '|g| ≤ 0.05', requires: 'The arms started out alike; no adjustment is needed.' },
    {
      band: 'requires-adjustment',
      range: '0.05 < |g| ≤ 0.25',
      requires: `The arms count as alike only if the analysis adjusts for the baseline score. ${
        adjustedInPlan ? 'The sealed plan does adjust for it.' : 'The sealed plan does not adjust for it.'
      }`,
    },
    { band: 'fails', range: '|g| > 0.25', requires: 'The arms differed before the intervention began; no adjustment can make up for it.' },
  ];
}

/** The pretest difference between the arms in SD units, banded as the published standards do. */
export function BaselinePanel({ measure, quasiExperimental }: { measure: MeasureChecks; quasiExperimental: boolean }) {
  const b = measure.baselineEquivalence;
  const highAttrition = measure.accounting?.attrition.students?.cautious.band === 'high';
  const why = quasiExperimental
    ? 'Required for this study: assignment was changed by hand after the random draw, so the arms were not formed at random.'
    : highAttrition
      ? 'Required for this study: student attrition is high under the cautious boundary, so the students who remain may no longer be alike.'
      : measure.accounting?.attrition.students
        ? 'Not strictly required (random assignment with low attrition), and shown for completeness.'
        : 'Whether it is required depends on attrition, which cannot be worked out until both arms have outcome scores.';

  return (
    <div className="rounded-lg border border-line bg-surface p-5">
      <p className={`text-sm ${measure.equivalenceRequired ? 'font-semibold text-caution' : 'text-ink-muted'}`}>{why}</p>
      {!b ? (
        <p className="mt-3 text-ink-muted">
          Baseline equivalence needs baseline and outcome scores for at least two students in each arm; there are not enough yet.
        </p>
      ) : (
        <>
          <div className="mt-3 flex flex-wrap items-baseline gap-x-4 gap-y-2">
            <p className="text-2xl font-semibold tabular-nums">
              {b.effectSize === 'cox-index' ? 'Cox index' : 'Hedges’ g'} = {formatNumber(b.g, 2)}
            </p>
            <p className="tabular-nums text-ink-muted">95% CI {formatInterval(b.ci, 2)}</p>
            <Badge tone={bandBadges[b.band].tone}>{bandBadges[b.band].label}</Badge>
          </div>
          <p className="mt-2">
            {b.advice}{' '}
            {b.effectSize === 'cox-index'
              ? `At baseline ${formatNumber(b.intervention.mean * 100, 0)} % answered yes in the intervention arm (${formatCount(b.intervention.n)} students) and ${formatNumber(b.comparison.mean * 100, 0)} % in the comparison arm (${formatCount(b.comparison.n)} students)`
              : `The pretest means are ${formatNumber(b.intervention.mean, 1)} (intervention, ${formatCount(b.intervention.n)} students) and ${formatNumber(b.comparison.mean, 1)} (comparison, ${formatCount(b.comparison.n)} students)`}
            , counting only students who also have an outcome score.
          </p>
          <ul className="mt-4 space-y-2" aria-label="What each band requires">
            {bandRequirements(b.adjustedInPlan).map((r) => {
              const current = r.band === b.band;
              return (
                <li
                  key={r.band}
                  className={`rounded-md border px-3 py-2 text-sm ${current ? 'border-accent bg-accent-soft' : 'border-line'}`}
                >
                  <span className="font-semibold tabular-nums">{r.range}</span> — {bandBadges[r.band].label.toLowerCase()}: {r.requires}
                  {current && <strong className="ml-1">(This measure.)</strong>}
                </li>
              );
            })}
          </ul>
        </>
      )}
    </div>
  );
}

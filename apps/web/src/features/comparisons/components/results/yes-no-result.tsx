import { decidingAnalysisNames, decidingTest, type RunResults } from '@evenhand/entities';
import { FigureTable } from '@/components/ui/figure-table';
import { formatCount, formatInterval, formatNumber, formatPStatement, formatSigned } from '@/lib/format';
import { confidenceLabel } from '@/lib/result-wording';

const percentInterval = (ci: readonly [number | null, number | null]) => formatInterval([ci[0] === null ? null : ci[0] * 100, ci[1] === null ? null : ci[1] * 100], 1);
const armNames = { intervention: 'Intervention', comparison: 'Comparison' } as const;

/**
 * A yes/no measure's figures: each arm's yes count of its students and percentage answering yes (Wilson interval), the
 * difference in percentage points (Newcombe), the odds ratio, the Cox index with the improvement index, the deciding
 * test's p and the other tests of the table; in a cluster-assigned study the cluster-robust regression and the
 * design-effect check. A statistic these counts leave undefined is named, with why.
 */
export function YesNoFigures({ results }: { results: RunResults }) {
  const y = results.yesNo;
  if (!y) return null;
  const level = confidenceLabel(y.confidence);
  const lp = y.linearProbability;
  const d = decidingTest(results);
  return (
    <div className="mt-5 space-y-4" data-testid="yes-no-figures">
      <FigureTable
        caption="Answers by arm"
        columns={[
          { key: 'arm', header: 'Arm' },
          { key: 'yes', header: 'Answered yes', numeric: true },
          {
            key: 'percent',
            header: (
              <>
                Yes, %{' '}<span className="block font-normal">({level} CI)</span>
              </>
            ),
            numeric: true,
          },
        ]}
        rows={y.arms.map((a) => ({
          id: a.arm,
          arm: armNames[a.arm],
          yes: `${formatCount(a.yes)} of ${formatCount(a.n)}`,
          // The interval on its own line, so the table fits a phone.
          percent: (
            <>
              {formatNumber(a.proportion * 100, 1)} %{' '}
              <span className="block text-ink-muted">{percentInterval(a.ci)}</span>
            </>
          ),
        }))}
      />
      <p className="max-w-prose text-sm text-ink-muted">
        “{y.yesIsGood ? 'Yes' : 'No'}” is the good answer on this measure. Each arm’s interval is Wilson’s score interval, defined even when
        an arm answered all yes or all no.
      </p>
      <div className="grid gap-4 md:grid-cols-2">
        <div className="rounded-md bg-sunken px-4 py-3">
          <p className="text-sm font-semibold text-ink-muted">Difference and odds</p>
          <p className="mt-1 tabular-nums" data-testid="yes-no-difference">
            Difference {formatSigned(y.difference.estimate * 100, 1)} percentage points ({level} CI {percentInterval(y.difference.ci)}, Newcombe)
            {y.oddsRatio ? `; odds ratio ${formatNumber(y.oddsRatio.estimate, 2)} (${level} CI ${formatInterval(y.oddsRatio.ci, 2)})` : ''}
          </p>
          <p className="mt-1 tabular-nums" data-testid="deciding-test">
            Deciding test: {decidingAnalysisNames[d.analysis]}, {formatPStatement(d.p)}
            {d.ci ? `; difference ${formatSigned(d.estimate * 100, 1)} points (${confidenceLabel(d.confidence)} CI ${percentInterval(d.ci)})` : ''}
          </p>
          {lp && (
            <p className="mt-1 text-sm tabular-nums text-ink-muted" data-testid="primary-test">
              t = {formatNumber(lp.t, 2)}, df = {formatNumber(lp.df, 1)} (Satterthwaite); {formatCount(lp.units.intervention)} intervention and{' '}
              {formatCount(lp.units.comparison)} comparison units
            </p>
          )}
          {y.designEffect && (
            <p className="mt-1 text-sm text-ink-muted">
              Design-effect check: SE inflated by √{formatNumber(y.designEffect.designEffect, 2)} (ICC {formatNumber(y.designEffect.icc, 2)}), {formatPStatement(y.designEffect.p)},{' '}
              interval {percentInterval(y.designEffect.ci)} points.
            </p>
          )}
        </div>
        <div className="rounded-md bg-sunken px-4 py-3">
          <p className="text-sm font-semibold text-ink-muted">Effect size and tests</p>
          {y.coxIndex && (
            <p className="mt-1 tabular-nums" data-testid="effect-size">
              Cox index = {formatNumber(y.coxIndex.value, 2)}; improvement index {formatSigned(y.coxIndex.improvementIndex, 1)} percentile points
            </p>
          )}
          <p className="mt-1 text-sm tabular-nums text-ink-muted">
            {y.zTest ? `Two-proportion z = ${formatNumber(y.zTest.z, 2)}, ${formatPStatement(y.zTest.p)}; ` : ''}
            {y.chiSquare ? `χ² = ${formatNumber(y.chiSquare.statistic, 2)}, ${formatPStatement(y.chiSquare.p)}; ` : ''}
            {y.chiSquareYates ? `with Yates’s correction ${formatPStatement(y.chiSquareYates.p)}; ` : ''}
            Fisher’s exact test {formatPStatement(y.fisher.p)}.
          </p>
          {y.coxIndex && (
            <p className="mt-1 text-sm text-ink-muted">
              {y.coxIndex.substantivelyImportant
                ? 'The Cox index is at least 0.25: large enough to count as substantively important, whatever the p-value.'
                : 'The Cox index is smaller than 0.25, the usual mark of a substantively important effect.'}
            </p>
          )}
          {y.notComputed && y.notComputed.length > 0 && (
            <ul className="mt-2 space-y-1 text-sm" data-testid="yes-no-not-computed">
              {y.notComputed.map((n) => (
                <li key={n.statistic}>
                  <span className="font-semibold">Not given — {n.statistic}:</span> {n.why.replace(/^Undefined: /, '')}
                </li>
              ))}
            </ul>
          )}
        </div>
      </div>
    </div>
  );
}

/** What qualifies a yes/no result, in place of the score diagnostics (normality and spread mean nothing for 0/1 answers). */
export function YesNoNotes({ results }: { results: RunResults }) {
  const notes = results.diagnostics.notes;
  if (!results.yesNo || notes.length === 0) return null;
  return (
    <ul className="list-disc space-y-1 pl-5 text-sm" data-testid="yes-no-notes">
      {notes.map((n) => (
        <li key={n}>{n}</li>
      ))}
    </ul>
  );
}

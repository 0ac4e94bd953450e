import { render, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { RunResultsView } from '@/features/comparisons/components/results/run-results';
import { demoRun } from '@/test-fixtures/run-results';
import { yesNoResults } from '@/test-fixtures/yes-no-results';

// The figures come from the engine on the counts (checked against SciPy, statsmodels and R in packages/stats); this
// checks what the page shows of them, and that nothing reads the 0/1 answers as a score.
describe('a yes/no result page', () => {
  it('shows each arm’s yes count of its students and percentage with its interval, the difference in points, odds ratio, Cox index and the deciding p — and no score figures', () => {
    const results = yesNoResults({ yes: 84, n: 200 }, { yes: 70, n: 200 });
    render(<RunResultsView run={demoRun({ results })} results={results} comparison={undefined} />);
    expect(screen.getByTestId('headline')).toHaveTextContent('42 % of intervention students answered yes to “Read at grade level by spring” at Spring 2026, against 35 % of comparison students: 7.0 percentage points more (95% confidence interval: −2.5 to 16.3 points).');
    const arms = screen.getByRole('table', { name: 'Answers by arm' });
    // Wilson 95% intervals of 84/200 and 70/200 (statsmodels proportion_confint: 0.3537–0.4893 and 0.2873–0.4184).
    expect(within(arms).getByRole('row', { name: /Intervention/ })).toHaveTextContent('84 of 200');
    expect(within(arms).getByRole('row', { name: /Intervention/ })).toHaveTextContent('42.0 % [35.4, 48.9]');
    expect(within(arms).getByRole('row', { name: /Comparison/ })).toHaveTextContent('35.0 % [28.7, 41.8]');
    // Newcombe's interval (statsmodels confint_proportions_2indep newcomb: −0.0252, 0.1634); odds ratio 84·130/(116·70) = 1.34.
    expect(screen.getByTestId('yes-no-difference')).toHaveTextContent(/^Difference \+7\.0 percentage points \(95% CI \[−2\.5, 16\.3\], Newcombe\); odds ratio 1\.34/);
    expect(screen.getByTestId('effect-size')).toHaveTextContent('Cox index = 0.18; improvement index +7.1 percentile points'); // ln((84/116)/(70/130))/1.65 = 0.1796; 100·Φ(0.1796) − 50 = 7.12 (SciPy norm.cdf)
    expect(screen.getByTestId('deciding-test')).toHaveTextContent(`Deciding test: the two-proportion z test, with Newcombe’s interval for the difference in proportions, p = .${Math.round(results.deciding!.p * 1000)}`);
    for (const scoreWords of [/Hedges/, /Shapiro/, /Mann–Whitney/, /Levene/, /Standard deviation|\bSD\b/, /Site by site/, /Average score/]) {
      expect(screen.queryAllByText(scoreWords)).toHaveLength(0);
    }
    expect(screen.getByTestId('yes-no-notes')).toHaveTextContent('normality is not tested');
  });

  it('when every intervention student answered yes, then the Wilson bound reaches 100 % and the odds ratio and Cox index are named as not given, with why', () => {
    const results = yesNoResults({ yes: 40, n: 40 }, { yes: 30, n: 42 });
    render(<RunResultsView run={demoRun({ results })} results={results} comparison={undefined} />);
    expect(within(screen.getByRole('table', { name: 'Answers by arm' })).getByRole('row', { name: /Intervention/ })).toHaveTextContent('100.0 % [91.2, 100.0]'); // statsmodels proportion_confint(40, 40, wilson): 0.9124
    expect(screen.queryByTestId('effect-size')).not.toBeInTheDocument();
    expect(screen.getByTestId('yes-no-difference')).not.toHaveTextContent('odds ratio');
    expect(screen.getByTestId('yes-no-not-computed')).toHaveTextContent('Not given — odds ratio: every intervention student answered yes, so the odds of yes in that arm are infinite.');
    expect(screen.getByTestId('yes-no-not-computed')).toHaveTextContent('Not given — Cox index and improvement index');
  });
});

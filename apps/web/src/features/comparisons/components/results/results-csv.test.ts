import { describe, expect, it } from 'vitest';
import { resultsCsv } from '@/features/comparisons/components/results/results-csv';
import { demoRun } from '@/test-fixtures/run-results';
import { yesNoResults } from '@/test-fixtures/yes-no-results';

/** The CSV as a map from "group,statistic" to its value cell. */
function cells(csv: string): Map<string, string> {
  const lines = csv.trim().split(/\r?\n/).slice(1);
  return new Map(lines.map((l) => {
    const [group, statistic, ...value] = l.split(',');
    return [`${group},${statistic}`, value.join(',')];
  }));
}

describe('the results CSV of a yes/no comparison', () => {
  it('carries each arm’s yes and no counts, students and percentage with its Wilson interval, the difference and the deciding p — the page’s numbers, no mean or SD', () => {
    const results = yesNoResults({ yes: 84, n: 200 }, { yes: 70, n: 200 });
    const csv = cells(resultsCsv(demoRun({ results, kind: 'confirmatory', multiplicity: null }), results, { label: 'Read at grade level by spring at Spring', prespecified: true }));
    const y = results.yesNo!;
    expect(csv.get('run,measure scale')).toBe('yes/no');
    expect(['yes', 'no', 'students', 'percent yes'].map((s) => csv.get(`intervention,${s}`))).toEqual(['84', '116', '200', '42']);
    expect(['yes', 'no', 'students', 'percent yes'].map((s) => csv.get(`comparison,${s}`))).toEqual(['70', '130', '200', '35']);
    expect(Number(csv.get('intervention,wilson ci low'))).toBe(y.arms[0].ci[0]);
    expect(Number(csv.get('comparison,wilson ci high'))).toBe(y.arms[1].ci[1]);
    expect(csv.get('difference in proportions,percentage points')).toBe('7');
    expect(Number(csv.get('difference in proportions,newcombe ci low'))).toBe(y.difference.ci[0]);
    expect(Number(csv.get('deciding analysis,p'))).toBe(results.deciding!.p);
    expect(Number(csv.get('cox index,value'))).toBe(y.coxIndex!.value);
    expect(Number(csv.get('tests,fisher exact p'))).toBe(y.fisher.p);
    for (const key of csv.keys()) expect(key).not.toMatch(/^(intervention|comparison),(mean|sd|se)$|hedges g/);
  });

  it('when an arm answered all yes, then the odds ratio and Cox index rows are replaced by why they are undefined', () => {
    const results = yesNoResults({ yes: 40, n: 40 }, { yes: 30, n: 42 });
    const csv = cells(resultsCsv(demoRun({ results }), results, undefined));
    expect(csv.get('intervention,percent yes')).toBe('100');
    expect(csv.has('odds ratio,estimate')).toBe(false);
    // Quoted: the reason has a comma in it.
    expect(csv.get('not computed,odds ratio')).toBe('"Undefined: every intervention student answered yes, so the odds of yes in that arm are infinite."');
  });
});

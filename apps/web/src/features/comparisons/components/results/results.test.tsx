import { render, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { MultiplicityResult, PrimaryResult } from '@/features/comparisons/components/results/primary-result';
import { SiteForest } from '@/features/comparisons/components/results/site-forest';
import { demoResults, demoRun } from '@/test-fixtures/run-results';

describe('PrimaryResult', () => {
  it('leads with the plain-language headline of a significant result, with the test line and effect size beside it', () => {
    const r = demoResults();
    r.clustering = null;
    render(<PrimaryResult results={r} />);
    expect(screen.getByTestId('headline')).toHaveTextContent('scored 9.99 higher than students in the comparison arm');
    expect(screen.getByText('Meets the pre-registered test')).toBeInTheDocument();
    expect(screen.getByTestId('primary-test')).toHaveTextContent('t = 3.11, df = 467.4, p = .002; difference +9.99 (95% CI [3.68, 16.29])');
    expect(screen.getByTestId('effect-size')).toHaveTextContent('Hedges’ g = 0.29 (95% CI [0.10, 0.47]); improvement index +11.2 percentile points');
  });

  it('when classrooms were assigned, the badge follows the clustering-corrected p and the page says which p decided', () => {
    // Student-level p = .002, clustering-corrected p = .138 in the fixture.
    render(<PrimaryResult results={demoResults()} />);
    expect(screen.getByText('Does not meet the pre-registered test')).toBeInTheDocument();
    expect(screen.queryByText('Meets the pre-registered test')).not.toBeInTheDocument();
    expect(screen.getByTestId('decided-by')).toHaveTextContent('Decided by the clustering-corrected p-value (p = .138)');
  });

  it('says plainly when a result does not meet the pre-registered test', () => {
    const r = demoResults();
    r.clustering = null;
    r.primary = { ...r.primary, meanDifference: 1.2, ci: [-5.1, 7.5], p: 0.71, significant: false };
    render(<PrimaryResult results={r} />);
    expect(screen.getByText('Does not meet the pre-registered test')).toBeInTheDocument();
    expect(screen.getByText(/This does not meet the pre-registered test .*: p = \.710\. The interval includes no difference at all\./)).toBeInTheDocument();
  });

  it('names a one-sided "less" test and the direction it tested', () => {
    const r = demoResults();
    r.primary = { ...r.primary, alternative: 'less', meanDifference: -4, ci: [null, -1.5], p: 0.004, significant: true };
    render(<PrimaryResult results={r} />);
    expect(screen.getByTestId('headline')).toHaveTextContent('scored 4.00 lower than students in the comparison arm');
    expect(screen.getByText(/one-sided \(intervention lower\)/)).toBeInTheDocument();
  });
});

describe('MultiplicityResult', () => {
  it('shows the Benjamini–Hochberg adjusted p for a confirmatory run', () => {
    render(<MultiplicityResult run={demoRun({ kind: 'confirmatory', multiplicity: { adjustedP: 0.0039, rejected: true, comparisons: 2 } })} />);
    expect(screen.getByTestId('multiplicity')).toHaveTextContent('Benjamini–Hochberg adjusted p = .004 across 2 confirmatory comparisons');
  });

  it('shows no Benjamini–Hochberg line for a monitoring run', () => {
    const { container } = render(<MultiplicityResult run={demoRun({ kind: 'monitoring', multiplicity: { adjustedP: 0.0039, rejected: true, comparisons: 2 } })} />);
    expect(container).toBeEmptyDOMElement();
    expect(screen.queryByText(/Benjamini–Hochberg/)).not.toBeInTheDocument();
  });
});

describe('SiteForest', () => {
  it('lists every site, and the pooled estimate, in the forest plot’s table', () => {
    const r = demoResults();
    render(<SiteForest results={r} />);
    const table = screen.getByRole('table', { name: 'Effect size by site' });
    for (const site of r.sites) {
      const row = within(table).getByRole('row', { name: new RegExp(site.siteName) });
      expect(row).toHaveTextContent(site.g < 0 ? `\u2212${Math.abs(site.g).toFixed(2)}` : site.g.toFixed(2));
    }
    expect(within(table).getAllByRole('row')).toHaveLength(1 + r.sites.length + 1);
    expect(within(table).getByRole('row', { name: /All sites \(random effects\)/ })).toHaveTextContent('0.26');
    expect(screen.getByTestId('heterogeneity')).toHaveTextContent('I² = 93.4%');
    expect(screen.getByRole('img', { name: /Forest plot of Hedges’ g for 6 sites/ })).toBeInTheDocument();
  });
});

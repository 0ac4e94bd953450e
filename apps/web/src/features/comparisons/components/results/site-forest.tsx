import type { RunResults } from '@evenhand/entities';
import * as Plot from '@observablehq/plot';
import { useMemo } from 'react';
import { Chart, chartColors } from '@/components/ui/chart';
import { FigureTable } from '@/components/ui/figure-table';
import { formatCount, formatInterval, formatNumber, formatPercent, formatPStatement } from '@/lib/format';

const POOLED = 'All sites (random effects)';

interface ForestRow {
  label: string;
  g: number;
  lo: number;
  hi: number;
  weight: number;
}

/**
 * How far the sites' estimates disagree beyond their own imprecision, in a plain sentence. The bands at 25 %, 50 % and
 * 75 % of I² follow Higgins et al. (2003); they are a common practice, not a rule.
 */
export function heterogeneityWords(i2: number): string {
  const share = formatPercent(i2 * 100, 0);
  if (i2 >= 0.5) return `The sites responded differently: ${share} of the spread between their estimates is more than their own imprecision would produce, so the pooled estimate is an average over sites that did not all respond alike.`;
  if (i2 >= 0.25) return `The sites responded somewhat differently: ${share} of the spread between their estimates is more than their own imprecision would produce.`;
  return `The sites’ estimates differ about as much as their own imprecision would make them differ (${share} beyond it), so one effect may fit them all.`;
}

function forestPlot(sites: ForestRow[], pooled: ForestRow | null) {
  const labels = [...sites.map((s) => s.label), ...(pooled ? [POOLED] : [])];
  return (width: number): Plot.PlotOptions => ({
    width,
    height: 60 + 34 * labels.length,
    marginLeft: 200,
    marginRight: 20,
    marginBottom: 42,
    x: { label: 'Hedges’ g (intervention − comparison)', labelAnchor: 'center', labelArrow: 'none', grid: true, nice: true },
    y: { domain: labels, label: null },
    r: { range: [3, 11] },
    marks: [
      Plot.ruleX([0], { stroke: chartColors.muted, strokeDasharray: '4 3' }),
      Plot.ruleY(sites, { y: 'label', x1: 'lo', x2: 'hi', stroke: chartColors.ink, strokeWidth: 1.5 }),
      Plot.dot(sites, { y: 'label', x: 'g', r: 'weight', symbol: 'square', fill: chartColors.intervention, stroke: chartColors.ink }),
      ...(pooled
        ? [
            Plot.ruleY([pooled], { y: 'label', x1: 'lo', x2: 'hi', stroke: chartColors.ink, strokeWidth: 3 }),
            Plot.dot([pooled], { y: 'label', x: 'g', symbol: 'diamond', r: 9, fill: chartColors.ink }),
          ]
        : []),
    ],
  });
}

/** Per-site effect sizes as a forest plot with its table, and the random-effects estimate across sites. */
export function SiteForest({ results }: { results: RunResults }) {
  const { sites, pooled } = results;
  const ordered = useMemo(() => [...sites].sort((a, b) => a.siteName.localeCompare(b.siteName)), [sites]);
  const plot = useMemo(
    () =>
      forestPlot(
        ordered.map((s) => ({ label: s.siteName, g: s.g, lo: s.ci[0], hi: s.ci[1], weight: s.weight })),
        pooled ? { label: POOLED, g: pooled.estimate, lo: pooled.ci[0], hi: pooled.ci[1], weight: 1 } : null,
      ),
    [ordered, pooled],
  );

  if (sites.length === 0) {
    return <p className="text-ink-muted">No site has students in both arms with outcome scores, so there are no per-site estimates.</p>;
  }

  const summary = `Forest plot of Hedges’ g for ${sites.length} sites${
    pooled ? `, and the random-effects estimate across sites of ${formatNumber(pooled.estimate, 2)} (95% CI ${formatNumber(pooled.ci[0], 2)} to ${formatNumber(pooled.ci[1], 2)})` : ''
  }. The table below lists every site’s estimate.`;

  return (
    <div className="space-y-4">
      <Chart
        plot={plot}
        summary={summary}
        caption="Each square is a site’s effect size, sized by its weight in the pooled estimate, with its 95% confidence interval; the diamond is the random-effects estimate across sites. Right of the dashed line favours the intervention arm."
      >
        <FigureTable
          caption="Effect size by site"
          columns={[
            { key: 'site', header: 'Site' },
            { key: 'n1', header: 'Intervention students', numeric: true },
            { key: 'n2', header: 'Comparison students', numeric: true },
            { key: 'mean1', header: 'Intervention mean', numeric: true },
            { key: 'mean2', header: 'Comparison mean', numeric: true },
            { key: 'g', header: 'Hedges’ g', numeric: true },
            { key: 'ci', header: '95% CI', numeric: true },
            { key: 'weight', header: 'Weight', numeric: true },
          ]}
          rows={ordered.map((s) => ({
            id: s.siteId,
            site: s.siteName,
            n1: formatCount(s.n1),
            n2: formatCount(s.n2),
            mean1: formatNumber(s.mean1, 1),
            mean2: formatNumber(s.mean2, 1),
            g: formatNumber(s.g, 2),
            ci: formatInterval(s.ci, 2),
            weight: pooled ? formatPercent(s.weight * 100, 1) : '—',
          }))}
          footer={
            pooled
              ? {
                  site: POOLED,
                  n1: formatCount(sites.reduce((t, s) => t + s.n1, 0)),
                  n2: formatCount(sites.reduce((t, s) => t + s.n2, 0)),
                  mean1: '',
                  mean2: '',
                  g: formatNumber(pooled.estimate, 2),
                  ci: formatInterval(pooled.ci, 2),
                  weight: '100.0%',
                }
              : undefined
          }
        />
      </Chart>
      {pooled ? (
        <div className="space-y-1">
          <p className="tabular-nums" data-testid="heterogeneity">
            Pooled across sites: g = {formatNumber(pooled.estimate, 2)} (95% CI {formatInterval(pooled.ci, 2)}), {formatPStatement(pooled.p)}. Spread
            between sites: Q = {formatNumber(pooled.q, 2)} with {pooled.df} degrees of freedom, {formatPStatement(pooled.pQ)}; τ² ={' '}
            {formatNumber(pooled.tau2, 3)}; I² = {formatPercent(pooled.i2 * 100, 1)}.
          </p>
          <p className="max-w-prose text-sm text-ink-muted">
            {heterogeneityWords(pooled.i2)} Each site’s own estimate rests on few classrooms and is imprecise.
          </p>
        </div>
      ) : (
        <p className="text-sm text-ink-muted">Fewer than two sites have both arms, so there is no pooled estimate across sites.</p>
      )}
    </div>
  );
}

import * as Plot from '@observablehq/plot';
import { useMemo } from 'react';
import { Badge } from '@/components/ui/badge';
import { Chart, chartColors } from '@/components/ui/chart';
import { FigureTable } from '@/components/ui/figure-table';
import type { ReportedComparison } from '@/features/report/api';
import { decidingTest, type DecidingAnalysis } from '@evenhand/entities';
import { formatCount, formatInterval, formatNumber, formatP, formatSigned } from '@/lib/format';

const decidingAnalysisShortNames: Record<DecidingAnalysis, string> = {
  'two-level': 'Two-level model',
  welch: 'Welch’s t',
  student: 'Student’s pooled t',
  'clustering-corrected': 'Welch’s t, clustering-corrected',
  'classroom-means': 'Classroom averages',
  'difference-in-proportions': 'Two-proportion z',
  'linear-probability': 'Linear probability, CR2',
};

function runStatus({ comparison, run }: ReportedComparison) {
  if (!run) return <span className="text-ink-muted">No finished run yet</span>;
  if (run.state === 'locked') return <Badge tone="accent">Locked</Badge>;
  if (run.kind === 'monitoring') return <Badge tone="caution">Interim — not confirmatory</Badge>;
  return <Badge tone="muted">{comparison.prespecified ? 'Finished, not locked' : 'Finished'}</Badge>;
}

/** Every comparison with its effect size and 95% CI: pre-specified first, exploratory marked. */
export function ResultsTable({ items }: { items: ReportedComparison[] }) {
  return (
    <FigureTable
      caption="Results of every comparison"
      hideCaption
      columns={[
        { key: 'comparison', header: 'Comparison' },
        { key: 'status', header: 'Result' },
        { key: 'n', header: 'Students analysed (intervention / comparison)', numeric: true },
        { key: 'analysis', header: 'Deciding analysis' },
        { key: 'difference', header: 'Difference (CI)', numeric: true },
        { key: 'g', header: 'Effect size: Hedges’ g (95% CI), or the Cox index for yes/no', numeric: true },
        { key: 'p', header: 'p', numeric: true },
        { key: 'bh', header: 'p, Benjamini–Hochberg', numeric: true },
      ]}
      rows={items.map((item) => {
        const r = item.run?.results;
        const d = r ? decidingTest(r) : null;
        const students = r?.descriptives.map((d) => formatCount(d.students)).join(' / ');
        return {
          id: item.comparison.id,
          comparison: (
            <>
              {item.comparison.label}
              <span className="mt-1 flex flex-wrap gap-1">
                {item.comparison.prespecified ? <Badge tone="accent">Pre-specified</Badge> : <Badge tone="caution">Exploratory</Badge>}
                {item.comparison.isPrimary && <Badge tone="muted">Primary outcome</Badge>}
              </span>
            </>
          ),
          status: runStatus(item),
          n: students ?? '—',
          analysis: d ? decidingAnalysisShortNames[d.analysis] : '—',
          // A yes/no measure: the difference in percentage points, and the Cox index in place of g.
          difference: !d ? '—' : r?.yesNo ? `${formatSigned(d.estimate * 100, 1)} points ${d.ci ? formatInterval([d.ci[0] === null ? null : d.ci[0] * 100, d.ci[1] === null ? null : d.ci[1] * 100], 1) : '(no interval)'}` : `${formatSigned(d.estimate, 2)} ${d.ci ? formatInterval(d.ci, 2) : '(no interval)'}`,
          g: !r ? '—' : r.yesNo ? (r.yesNo.coxIndex ? `Cox index ${formatNumber(r.yesNo.coxIndex.value, 2)}` : 'Cox index undefined (an arm answered all yes or all no)') : `${formatNumber(r.effectSize.g, 2)} ${formatInterval(r.effectSize.ci, 2)}`,
          p: d ? formatP(d.p) : '—',
          bh: item.run?.kind === 'confirmatory' && item.run.multiplicity ? formatP(item.run.multiplicity.adjustedP) : '—',
        };
      })}
    />
  );
}

/** The comparisons' effect sizes side by side: a dot and its 95% CI per comparison. */
export function EffectSizeChart({ items }: { items: ReportedComparison[] }) {
  const rows = useMemo(
    () =>
      items
        .filter((i) => i.run?.results && (!i.run.results.yesNo || i.run.results.yesNo.coxIndex))
        .map((i) => {
          const r = i.run!.results!;
          const label = `${i.comparison.label}${i.comparison.prespecified ? '' : ' (exploratory)'}`;
          const kind = i.comparison.prespecified ? 'Pre-specified' : 'Exploratory';
          // A yes/no comparison's effect size is its Cox index, on g's scale by design, ± 1.96 SE (Woolf's SE over 1.65).
          const cox = r.yesNo?.coxIndex;
          if (cox) return { label: `${label} (Cox index)`, name: 'Cox index', g: cox.value, lo: cox.value - 1.959964 * cox.se, hi: cox.value + 1.959964 * cox.se, kind };
          return { label, name: 'g', g: r.effectSize.g, lo: r.effectSize.ci[0], hi: r.effectSize.ci[1], kind };
        }),
    [items],
  );
  const plot = useMemo(
    () =>
      (width: number): Plot.PlotOptions => ({
        width,
        height: 70 + 40 * rows.length,
        marginLeft: Math.min(360, width / 2),
        marginBottom: 42,
        // Centred under a narrow plot area (half of a phone's width), the label would run past the page's right edge.
        x: { label: 'Effect size (intervention − comparison), 95% CI', labelAnchor: width < 560 ? 'right' : 'center', labelArrow: 'none', grid: true, nice: true },
        y: { domain: rows.map((r) => r.label), label: null, tickFormat: (d: string) => (d.length > 48 ? `${d.slice(0, 46)}…` : d) },
        color: { domain: ['Pre-specified', 'Exploratory'], range: [chartColors.intervention, chartColors.comparison], legend: true },
        marks: [
          Plot.ruleX([0], { stroke: chartColors.muted, strokeDasharray: '4 3' }),
          Plot.ruleY(rows, { y: 'label', x1: 'lo', x2: 'hi', stroke: 'kind', strokeWidth: 2 }),
          Plot.dot(rows, { y: 'label', x: 'g', fill: 'kind', r: 6 }),
        ],
      }),
    [rows],
  );
  if (rows.length === 0) return null;
  return (
    <Chart
      plot={plot}
      summary={`Effect sizes of ${rows.length} comparisons with their 95% confidence intervals: ${rows
        .map((r) => `${r.label}, ${r.name} ${formatNumber(r.g, 2)} from ${formatNumber(r.lo, 2)} to ${formatNumber(r.hi, 2)}`)
        .join('; ')}.`}
      caption="Each dot is a comparison’s Hedges’ g (the Cox index for a yes/no measure, marked) with its 95% confidence interval; right of the dashed line means more (or higher) in the intervention arm. The same numbers are in the table above."
    />
  );
}

import type { MeasureChecks } from '@evenhand/entities';
import * as Plot from '@observablehq/plot';
import { useMemo } from 'react';
import { Chart, chartColors } from '@/components/ui/chart';
import { FigureTable } from '@/components/ui/figure-table';
import { formatCount, formatNumber } from '@/lib/format';
import { armLabels } from '@/lib/study';

type BoxRow = MeasureChecks['boxPlots'][number] & { armLabel: string; waveName: string };

const armOrder = [armLabels.intervention, armLabels.comparison];
const color = { domain: armOrder, range: [chartColors.intervention, chartColors.comparison], legend: true };

/** A quantile box per row: whiskers min–max, box Q1–Q3, a tick at the median (Plot's own marks). */
function boxMarks(rows: BoxRow[], facets: { fx?: keyof BoxRow; fy?: keyof BoxRow }) {
  const common = { y: 'armLabel', ...facets } as const;
  return [
    Plot.ruleY(rows, { ...common, x1: 'min', x2: 'max', stroke: 'armLabel', strokeWidth: 1.5 }),
    Plot.barX(rows, { ...common, x1: 'q1', x2: 'q3', fill: 'armLabel', fillOpacity: 0.22, stroke: 'armLabel', insetTop: 3, insetBottom: 3 }),
    Plot.tickX(rows, { ...common, x: 'median', stroke: chartColors.ink, strokeWidth: 2.5, insetTop: 3, insetBottom: 3 }),
  ];
}

function QuantileTable({ rows, caption, withSite }: { rows: BoxRow[]; caption: string; withSite: boolean }) {
  const columns = [
    { key: 'wave', header: 'Wave' },
    ...(withSite ? [{ key: 'site', header: 'Site' }] : []),
    { key: 'arm', header: 'Arm' },
    { key: 'n', header: 'Students', numeric: true },
    { key: 'min', header: 'Lowest', numeric: true },
    { key: 'q1', header: 'Lower quartile', numeric: true },
    { key: 'median', header: 'Median', numeric: true },
    { key: 'q3', header: 'Upper quartile', numeric: true },
    { key: 'max', header: 'Highest', numeric: true },
  ];
  return (
    <details className="text-sm">
      <summary className="cursor-pointer font-semibold text-accent">Show the numbers as a table</summary>
      <FigureTable
        className="mt-2"
        caption={caption}
        columns={columns}
        rows={rows.map((r) => ({
          id: `${r.waveId}-${r.siteId ?? 'all'}-${r.arm}`,
          wave: r.waveName,
          site: r.siteName ?? '',
          arm: r.armLabel,
          n: formatCount(r.n),
          min: formatNumber(r.min, 1),
          q1: formatNumber(r.q1, 1),
          median: formatNumber(r.median, 1),
          q3: formatNumber(r.q3, 1),
          max: formatNumber(r.max, 1),
        }))}
      />
    </details>
  );
}

function buildView(measure: MeasureChecks) {
  const waveOrder = measure.quality.map((q) => q.waveName);
  const waveNames = new Map(measure.quality.map((q) => [q.waveId, q.waveName]));
  const rows: BoxRow[] = measure.boxPlots
    .map((b) => ({ ...b, armLabel: armLabels[b.arm], waveName: waveNames.get(b.waveId) ?? '' }))
    .sort((a, b) => waveOrder.indexOf(a.waveName) - waveOrder.indexOf(b.waveName) || armOrder.indexOf(a.armLabel) - armOrder.indexOf(b.armLabel));
  const byArm = rows.filter((r) => r.siteId === null);
  const bySite = rows
    .filter((r) => r.siteId !== null)
    .sort((a, b) => (a.siteName ?? '').localeCompare(b.siteName ?? '') || waveOrder.indexOf(a.waveName) - waveOrder.indexOf(b.waveName));
  const sites = [...new Set(bySite.map((r) => r.siteName ?? ''))];
  const [low, high] = measure.range;

  const x = { domain: [low, high], label: 'Score', labelAnchor: 'center', labelArrow: 'none', grid: true } as const;

  const armPlot = (width: number): Plot.PlotOptions => ({
    width,
    height: 150,
    marginLeft: 100,
    marginBottom: 42,
    x,
    y: { domain: armOrder, label: null },
    fx: { domain: waveOrder, label: null },
    color,
    marks: [Plot.frame({ stroke: chartColors.line }), ...boxMarks(byArm, { fx: 'waveName' })],
  });

  const sitePlot = (width: number): Plot.PlotOptions => ({
    width,
    height: 80 + 46 * sites.length,
    marginLeft: 190,
    marginRight: 10,
    marginBottom: 42,
    x,
    y: { domain: armOrder, axis: null },
    fx: { domain: waveOrder, label: null },
    fy: { domain: sites, label: null, axis: 'left' },
    color,
    marks: [Plot.frame({ stroke: chartColors.line }), ...boxMarks(bySite, { fx: 'waveName', fy: 'siteName' })],
  });

  return { waveOrder, byArm, bySite, sites, armPlot, sitePlot };
}

/** Box plots of one measure's scores per arm and wave, then per site as small multiples. */
export function BoxPlots({ measure }: { measure: MeasureChecks }) {
  const { waveOrder, byArm, bySite, sites, armPlot, sitePlot } = useMemo(() => buildView(measure), [measure]);

  if (byArm.length === 0) {
    return <p className="text-ink-muted">No scores have been entered for this measure yet, so there is nothing to draw.</p>;
  }

  const medians = (wave: string) =>
    byArm
      .filter((r) => r.waveName === wave)
      .map((r) => `${r.armLabel.toLowerCase()} median ${formatNumber(r.median, 1)}`)
      .join(', ');

  return (
    <div className="space-y-4">
      <h4 className="font-semibold">All sites together</h4>
      <Chart
        plot={armPlot}
        summary={`Box plots of ${measure.measureName} by arm and wave. ${waveOrder.map((w) => `${w}: ${medians(w)}`).join('. ')}.`}
        caption="Each box spans the middle half of the scores (lower to upper quartile), the dark tick marks the median, and the line runs from the lowest to the highest score."
      >
        <QuantileTable rows={byArm} caption={`${measure.measureName}: score quantiles by arm and wave`} withSite={false} />
      </Chart>
      {bySite.length > 0 && (
        <>
          <h4 className="pt-4 font-semibold">Site by site</h4>
        <Chart
          plot={sitePlot}
          summary={`Box plots of ${measure.measureName} for each of ${sites.length} sites, by arm and wave; the table below lists every box’s quantiles.`}
          caption="The same boxes for each site; in each pair, the upper box is the intervention arm and the lower box the comparison arm."
        >
          <QuantileTable rows={bySite} caption={`${measure.measureName}: score quantiles by site, arm and wave`} withSite />
        </Chart>
        </>
      )}
    </div>
  );
}

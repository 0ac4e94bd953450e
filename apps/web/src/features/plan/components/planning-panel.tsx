import * as Plot from '@observablehq/plot';
import { useCallback, useMemo, useState } from 'react';
import { Chart, chartColors } from '@/components/ui/chart';
import { FigureTable } from '@/components/ui/figure-table';
import type { Design } from '@evenhand/stats';
import { curveUnit, planningFields, planningFigures, proportionPlanning, type CurvePoint, type PlanningContext, type PlanningValues } from '@/features/plan/planning';

const sd = (v: number) => v.toFixed(2);
const percent = (v: number) => `${Math.round(v * 100)}%`;

const capitalise = (text: string) => text[0].toUpperCase() + text.slice(1);

function nearest(curve: CurvePoint[], unitsPerArm: number): CurvePoint {
  return curve.reduce((a, b) => (Math.abs(b.unitsPerArm - unitsPerArm) < Math.abs(a.unitsPerArm - unitsPerArm) ? b : a));
}

/** A handful of rows for the chart's text equivalent: evenly spread, always with the planned number. */
function tableRows(curve: CurvePoint[], planned: number): CurvePoint[] {
  const picks = new Set<CurvePoint>();
  const every = Math.max(1, Math.floor(curve.length / 5));
  curve.forEach((p, i) => {
    if (i % every === 0 || i === curve.length - 1) picks.add(p);
  });
  picks.add(nearest(curve, planned));
  return [...picks].sort((a, b) => a.unitsPerArm - b.unitsPerArm);
}

interface PlanningPanelProps {
  values: PlanningValues;
  context: PlanningContext;
}

/** Minimum detectable effect size and power for the planned numbers, recomputed as the plan is typed. */
export function PlanningPanel({ values, context }: PlanningPanelProps) {
  // The form hands over a new object on every keystroke; recompute (and redraw) only when a number changed.
  const key = JSON.stringify([planningFields.map((f) => values[f] ?? null), context]);
  const [latest, setLatest] = useState({ key, values, context });
  if (latest.key !== key) setLatest({ key, values, context });
  const figures = useMemo(() => planningFigures(latest.values, latest.context), [latest]);
  const unit = curveUnit(context.unit);
  const cluster = context.unit !== 'student';

  const plot = useCallback(
    (width: number): Plot.PlotOptions => {
      if (!figures.ok) return { marks: [] };
      const planned = nearest(figures.curve, figures.unitsPerArm);
      return {
        height: 240,
        width,
        marginLeft: 48,
        marginBottom: 44,
        x: { label: `${capitalise(unit.plural)} per arm →`, labelAnchor: 'center', labelOffset: 38, grid: true },
        y: { label: '↑ MDES (SD)', grid: true, zero: true },
        marks: [
          Plot.line(figures.curve, { x: 'unitsPerArm', y: 'mdes', stroke: chartColors.intervention, strokeWidth: 2 }),
          ...(figures.effect !== null ? [Plot.ruleY([figures.effect], { stroke: chartColors.comparison, strokeDasharray: '5,4' })] : []),
          Plot.dot([planned], { x: 'unitsPerArm', y: 'mdes', r: 5, fill: chartColors.ink }),
        ],
      };
    },
    [figures, unit.plural],
  );
  const points = figures.ok ? figures.curve : [];

  return (
    <section aria-labelledby="planning-panel-title" className="rounded-lg border border-line bg-surface p-5">
      <h3 id="planning-panel-title" className="text-lg font-semibold">
        What the planned numbers can detect
      </h3>
      <div aria-live="polite" className="mt-3">
        {!figures.ok ? (
          <p className="text-ink-muted">{figures.problem}</p>
        ) : (
          <dl className="grid grid-cols-2 gap-3">
            <div>
              <dt className="text-sm text-ink-muted">Minimum detectable effect size</dt>
              <dd className="text-2xl font-semibold" data-testid="planning-mdes">
                {sd(figures.mdes)} SD
              </dd>
              <dd className="text-sm text-ink-muted">at 80% power</dd>
            </div>
            <div>
              <dt className="text-sm text-ink-muted">Power for the smallest effect of interest</dt>
              <dd className="text-2xl font-semibold" data-testid="planning-power">
                {figures.power === null ? '—' : percent(figures.power)}
              </dd>
              <dd className="text-sm text-ink-muted">{figures.effect === null ? 'enter the effect' : `to detect ${sd(figures.effect)} SD`}</dd>
            </div>
          </dl>
        )}
      </div>
      {figures.ok && context.yesNo && <YesNoPlanning design={figures.design} />}
      {figures.ok && (
        <>
          <p className="mt-3 text-sm">
            {figures.unitsPerArmNeeded === null
              ? figures.effect === null
                ? null
                : `No realistic number of ${unit.plural} reaches ${sd(figures.effect)} SD with these settings.`
              : figures.mdes <= (figures.effect ?? 0)
                ? `The plan can detect the smallest effect of interest; ${figures.unitsPerArmNeeded} ${unit.plural} per arm would already be enough.`
                : `To detect ${sd(figures.effect ?? 0)} SD with 80% power, plan about ${figures.unitsPerArmNeeded} ${unit.plural} per arm.`}
          </p>
          <p className="mt-2 text-sm text-ink-muted">
            {cluster
              ? `${capitalise(unit.plural)} are assigned and students in one are partly alike, so this uses ${figures.icc.note}.`
              : 'Students are assigned one by one, so no clustering enters the calculation.'}
          </p>
          <Chart
            className="mt-4"
            plot={plot}
            summary={`Line chart: the minimum detectable effect size falls from ${sd(points[0]?.mdes ?? 0)} SD with 2 ${unit.plural} per arm to ${sd(points.at(-1)?.mdes ?? 0)} SD with ${points.at(-1)?.unitsPerArm ?? 0}; the plan has ${figures.unitsPerArm} per arm.`}
            caption={`MDES (80% power) against the number of ${unit.plural} per arm; the dot is the plan${figures.effect !== null ? ', the dashed line the smallest effect of interest' : ''}.`}
          >
            <FigureTable
              caption={`MDES by ${unit.plural} per arm`}
              columns={[
                { key: 'units', header: `${capitalise(unit.plural)} per arm`, numeric: true },
                { key: 'mdes', header: 'MDES (SD)', numeric: true },
              ]}
              rows={tableRows(figures.curve, figures.unitsPerArm).map((p) => ({
                id: String(p.unitsPerArm),
                units: p === nearest(figures.curve, figures.unitsPerArm) ? `${p.unitsPerArm} (planned)` : String(p.unitsPerArm),
                mdes: sd(p.mdes),
              }))}
            />
          </Chart>
        </>
      )}
    </section>
  );
}

/** A yes/no primary measure: the detectable difference in percentage points for the share expected in the comparison arm. */
function YesNoPlanning({ design }: { design: Design }) {
  const [expected, setExpected] = useState('50');
  const share = Number(expected) / 100;
  const r = proportionPlanning(design, share);
  return (
    <div className="mt-3 rounded-md bg-sunken px-4 py-3" data-testid="planning-yes-no">
      <label className="text-sm font-semibold" htmlFor="expected-yes">
        Share of comparison students expected to answer yes (%)
      </label>
      <input
        id="expected-yes"
        type="number"
        min={1}
        max={99}
        value={expected}
        onChange={(e) => setExpected(e.target.value)}
        className="ml-2 w-20 rounded border border-line px-2 py-1"
      />
      <p className="mt-2 text-sm">
        {r
          ? `At 80% power the plan detects a difference of ${(r.detectableDifference * 100).toFixed(1)} percentage points: from ${Math.round(share * 100)} % to ${
              r.detectableProportionAbove === null ? 'more than 100 %' : `${Math.round(r.detectableProportionAbove * 100)} %`
            } answering yes (or down to ${r.detectableProportionBelow === null ? 'below 0 %' : `${Math.round(r.detectableProportionBelow * 100)} %`}).`
          : 'Enter a share between 1 and 99 %.'}
      </p>
    </div>
  );
}

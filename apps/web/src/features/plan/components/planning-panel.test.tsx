import { mdes, power } from '@evenhand/stats';
import { render, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { PlanningPanel } from '@/features/plan/components/planning-panel';
import type { PlanningValues } from '@/features/plan/planning';

const plan: PlanningValues = {
  alpha: 0.05,
  alternative: 'two-sided',
  shareIntervention: 0.5,
  smallestEffectOfInterest: 0.25,
  plannedSites: 6,
  plannedClassrooms: 24,
  plannedStudentsPerClassroom: 25,
  covariate: 'baseline',
  covariateR2: 0.5,
  iccSource: 'assumed',
  icc: 0.15,
};

const cluster = (clusters: number) =>
  ({ design: 'cluster', clusters, clusterSize: 25, icc: 0.15, r2Level1: 0.5, p: 0.5, alpha: 0.05, alternative: 'two-sided' }) as const;

describe('PlanningPanel', () => {
  it('shows the MDES and power that @evenhand/stats gives for the planned classrooms, and follows a change in them', () => {
    const { rerender } = render(<PlanningPanel values={plan} context={{ unit: 'classroom', measureKind: 'achievement' }} />);
    const at24 = mdes(cluster(24)).mdes;
    expect(screen.getByTestId('planning-mdes')).toHaveTextContent(`${at24.toFixed(2)} SD`);
    expect(screen.getByTestId('planning-power')).toHaveTextContent(`${Math.round(power({ ...cluster(24), effectSize: 0.25 }).power * 100)}%`);

    rerender(<PlanningPanel values={{ ...plan, plannedClassrooms: 60 }} context={{ unit: 'classroom', measureKind: 'achievement' }} />);
    const at60 = mdes(cluster(60)).mdes;
    expect(at60).toBeLessThan(at24);
    expect(screen.getByTestId('planning-mdes')).toHaveTextContent(`${at60.toFixed(2)} SD`);
  });

  it("uses the standard default ICC of the primary measure's kind unless one is assumed", () => {
    const values = { ...plan, iccSource: 'default' as const, icc: null };
    const { rerender } = render(<PlanningPanel values={values} context={{ unit: 'classroom', measureKind: 'behaviour' }} />);
    expect(screen.getByTestId('planning-mdes')).toHaveTextContent(`${mdes({ ...cluster(24), icc: 0.1 }).mdes.toFixed(2)} SD`);
    expect(screen.getByText(/standard default ICC for a behaviour measure, 0\.10/)).toBeInTheDocument();

    rerender(<PlanningPanel values={values} context={{ unit: 'classroom', measureKind: 'achievement' }} />);
    expect(screen.getByTestId('planning-mdes')).toHaveTextContent(`${mdes({ ...cluster(24), icc: 0.2 }).mdes.toFixed(2)} SD`);
  });

  it('gives the chart a text equivalent: a table of MDES by classrooms per arm with the plan marked', () => {
    render(<PlanningPanel values={plan} context={{ unit: 'classroom', measureKind: 'achievement' }} />);
    expect(screen.getByRole('img', { name: /minimum detectable effect size falls/ })).toBeInTheDocument();
    const table = screen.getByRole('table', { name: 'MDES by classrooms per arm' });
    const planned = within(table).getByRole('rowheader', { name: '12 (planned)' }).closest('tr')!;
    expect(planned).toHaveTextContent(mdes(cluster(24)).mdes.toFixed(2));
  });

  it('says what is missing instead of a number while the planned numbers are incomplete', () => {
    render(<PlanningPanel values={{ ...plan, plannedStudentsPerClassroom: Number.NaN }} context={{ unit: 'classroom', measureKind: null }} />);
    expect(screen.getByText('Enter the planned numbers of sites, classrooms and students per classroom.')).toBeInTheDocument();
    expect(screen.queryByTestId('planning-mdes')).not.toBeInTheDocument();
  });
});

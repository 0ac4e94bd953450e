import type { Study } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { FlowDiagram } from '@/features/report/components/flow-diagram';
import { demoResults } from '@/test-fixtures/run-results';

const study = {
  id: 'c40f0c41-126b-4104-bf98-f984f59883c5',
  title: 'Lantern Reading Routine in grades 3 and 4',
  unitOfAssignment: 'classroom',
  quasiExperimental: false,
  counts: { sites: 6, classrooms: 24, measures: 2, waves: 2 },
} as Study;

describe('FlowDiagram', () => {
  it('follows each arm from allocation to analysis in classrooms and students, with every loss under its reason', () => {
    render(<FlowDiagram study={study} accounting={demoResults().accounting!} source="From the locked run." />);
    expect(screen.getByText(/6 sites, 24 classrooms, 612 students registered by code/)).toBeInTheDocument();
    const intervention = screen.getByRole('region', { name: 'Intervention arm' });
    const steps = within(intervention).getAllByRole('listitem').filter((li) => within(li).queryByRole('heading'));
    expect(steps.map((s) => within(s).getByRole('heading').textContent)).toEqual(['Allocated', 'Not analysed', 'Analysed']);
    expect(steps[0]).toHaveTextContent('12 classrooms, 313 students');
    // 313 − 227 = 86 students and 12 − 10 = 2 classrooms, each counted once under one reason.
    expect(within(steps[1]).getByTestId('flow-lost')).toHaveTextContent('2 classrooms, 86 students');
    expect(within(steps[1]).getAllByRole('listitem').map((li) => li.textContent)).toEqual([
      '1 classroom: outcome sheet submitted, awaiting review',
      '1 classroom: outcome sheet returned to the teacher',
      '28 students: outcome sheet submitted, awaiting review',
      '26 students: outcome sheet returned to the teacher',
      '10 students: marked as having left the study',
      '12 students: no outcome score on their classroom’s sheet',
      '10 students: no pretest score, which the analysis adjusts for',
    ]);
    expect(steps[2]).toHaveTextContent('10 classrooms, 227 students');
    expect(screen.getByRole('region', { name: 'Comparison arm' })).toHaveTextContent('12 classrooms, 299 students');
    expect(screen.getByRole('figure')).toHaveTextContent('analysed means an outcome score on an accepted sheet and a pretest score, which the analysis adjusts for');
  });
});

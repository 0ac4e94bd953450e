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
  it('follows each arm from allocation to analysis in classrooms and students, with the losses between', () => {
    render(<FlowDiagram study={study} flow={demoResults().flow} source="From the locked run." />);
    expect(screen.getByText(/6 sites, 24 classrooms, 612 students registered by code/)).toBeInTheDocument();
    const intervention = screen.getByRole('region', { name: 'Intervention arm' });
    const steps = within(intervention).getAllByRole('listitem');
    expect(steps.map((s) => within(s).getByRole('heading').textContent)).toEqual(['Allocated', 'Followed up', 'Analysed']);
    expect(steps[0]).toHaveTextContent('12 classrooms, 313 students');
    expect(steps[1]).toHaveTextContent('227 students with an outcome score on an accepted sheet; 86 not analysed (left the study, no score, or their classroom’s sheet not accepted');
    expect(steps[2]).toHaveTextContent('10 classrooms, 227 students; 2 classrooms without an accepted outcome sheet');
    expect(screen.getByRole('region', { name: 'Comparison arm' })).toHaveTextContent('12 classrooms, 299 students');
  });
});

import { render, screen } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { EvidencePreview } from '@/features/plan/components/evidence-preview';

// The rules are tested in packages/stats/src/evidence; here the panel must say what they give for the plan's numbers.
const design = {
  randomised: true,
  unitOfAssignment: 'classroom' as const,
  plannedSites: 4,
  plannedClassrooms: 24,
  plannedStudentsPerClassroom: 25,
  shareIntervention: 0.5,
  baselineMeasured: true,
  adjustsForBaseline: true,
  accountsForClustering: true,
  boundary: 'cautious' as const,
};

describe('EvidencePreview', () => {
  it('when 24 classrooms of 25 in 4 schools are randomised, then the best case is without reservations and strong evidence', () => {
    render(<EvidencePreview design={design} />);
    expect(screen.getByText(/would meet the evidence standards without reservations/)).toBeTruthy();
    expect(screen.getByText('strong evidence')).toBeTruthy();
    expect(screen.getByText(/a preview, not a review/)).toBeTruthy();
  });
  it('when two schools are assigned one to each arm, then it says the design cannot meet the standards and why', () => {
    render(<EvidencePreview design={{ ...design, unitOfAssignment: 'school', plannedSites: 2 }} />);
    expect(screen.getByText(/would not meet the evidence standards/)).toBeTruthy();
    expect(screen.getAllByText(/the school’s effect cannot be told apart/)).toHaveLength(2);
  });
});

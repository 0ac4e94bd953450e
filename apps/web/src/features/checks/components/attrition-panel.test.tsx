import type { AttritionCheck } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { AttritionPanel } from '@/features/checks/components/attrition-panel';

// Boundaries as @evenhand/stats' attrition() reports them (WWC Handbook v4.1 Table II.1 rows 15% and 20%).
function attritionAt(overall: number, interpolated: boolean): AttritionCheck {
  const basis = interpolated ? ('interpolated' as const) : ('listed-row' as const);
  const bracketingRows: [number, number] | null = interpolated ? [15, 20] : null;
  return {
    overall,
    differential: 11.08,
    attrition1: 20.45,
    attrition2: 9.36,
    cautious: { boundary: 'cautious', maxDifferential: 5.9, band: 'high', interpolated, bracketingRows, basis },
    optimistic: { boundary: 'optimistic', maxDifferential: 10.7, band: 'high', interpolated, bracketingRows, basis },
  };
}

const counts = { intervention: { randomised: 313, analysed: 249 }, comparison: { randomised: 299, analysed: 271 }, lost: ['Intervention: 64 students: outcome sheet returned to the teacher', 'Comparison: 28 students: marked as having left the study'] };

describe('AttritionPanel', () => {
  it('when the boundary was interpolated, then the note names the two stored rows it lies between', () => {
    render(<AttritionPanel title="Students" unit={['student', 'students']} attrition={attritionAt(15.03, true)} counts={counts} />);
    const note = screen.getByTestId('interpolation-note');
    expect(note).toHaveTextContent('Evenhand stores the handbook’s rows for 15% and 20% overall attrition, not 15.0%; the boundary here is the straight line between them.');
    expect(note).toHaveTextContent('15.0%');
  });

  it('shows no interpolation note when the overall rate is a listed row, and names the row instead', () => {
    render(<AttritionPanel title="Students" unit={['student', 'students']} attrition={attritionAt(15, false)} counts={counts} />);
    expect(screen.queryByTestId('interpolation-note')).not.toBeInTheDocument();
    expect(screen.getByText(/Cautious boundary: the handbook’s listed row for 15% overall attrition/)).toBeInTheDocument();
  });

  it('rates the differential against both boundaries, with the boundary value used', () => {
    render(<AttritionPanel title="Students" unit={['student', 'students']} attrition={attritionAt(15.03, true)} counts={counts} />);
    const rows = within(screen.getByRole('table')).getAllByRole('row');
    expect(rows[1]).toHaveTextContent(/Cautious boundary\s*5\.9 pp\s*11\.1 pp\s*High attrition/);
    expect(rows[2]).toHaveTextContent(/Optimistic boundary\s*10\.7 pp\s*11\.1 pp\s*High attrition/);
    expect(screen.getByText(/Of 612 students randomised, 520 were analysed/)).toBeInTheDocument();
    // Each loss under its reason, as the counts gave them.
    expect(within(screen.getByRole('list', { name: 'Students not analysed, by reason' })).getAllByRole('listitem').map((li) => li.textContent)).toEqual(counts.lost);
  });
});

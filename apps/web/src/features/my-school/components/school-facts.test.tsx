import type { SiteFacts } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { SchoolFacts } from '@/features/my-school/components/school-facts';

const hidden = { value: null, suppressed: true };

function facts(overrides: Partial<SiteFacts> = {}): SiteFacts {
  return {
    generatedAt: '2026-12-02T08:00:00.000Z',
    study: {
      id: '5b0f3f1e-1c2d-4e5f-8a9b-0c1d2e3f4a5b',
      title: 'Paired reading in grade 4',
      intervention: 'Paired reading',
      comparisonCondition: 'Usual reading block',
      status: 'reported',
      unitOfAssignment: 'classroom',
      quasiExperimental: false,
    },
    site: { id: '6c1a4b2e-2d3e-4f5a-9b0c-1d2e3f4a5b6c', name: 'Willow Lane Elementary' },
    participation: {
      arms: [
        { arm: 'intervention', classrooms: 2, students: hidden },
        { arm: 'comparison', classrooms: 2, students: hidden },
      ],
      classrooms: 4,
      students: { value: 40, suppressed: false },
      note: 'Student numbers by group are not shown: one group has fewer than 10 students, and showing the other would reveal it.',
    },
    waves: [
      { id: '7d2b5c3f-3e4f-4a5b-8c1d-2e3f4a5b6c7d', name: 'Autumn', kind: 'baseline', opensOn: '2026-09-14', closesOn: '2026-10-09', status: 'closed', sheets: 4, accepted: 3, submitted: 0, waiting: 1, percentAccepted: 75 },
    ],
    late: [{ classroomName: 'Room 2', waveName: 'Autumn', measureName: 'Reading fluency', returned: true, closedOn: '2026-10-09' }],
    results: [
      {
        runId: '8e3c6d4a-4f5a-4b6c-9d2e-3f4a5b6c7d8e',
        label: 'Reading fluency at Spring',
        measureName: 'Reading fluency',
        waveName: 'Spring',
        isPrimary: true,
        lockedAt: '2026-11-30T10:00:00.000Z',
        district: {
          g: 0.314,
          gCi: [0.12, 0.51],
          improvementIndex: 12.3,
          substantivelyImportant: true,
          favours: 'intervention',
          analysis: 'two-level',
          estimate: 6.4,
          p: 0.04,
          ci: [0.3, 12.5],
          confidence: 0.95,
          alpha: 0.05,
          alternative: 'two-sided',
          met: true,
          students: { value: 420, suppressed: false },
          classrooms: 16,
        },
        sentences: ['Across all schools in the study, students in intervention classrooms scored higher on Reading fluency at Spring.'],
        evidence:
          'Evidence preview, not a review (the evidence reviewers decide): this comparison would meet the evidence standards with reservations and would count as promising evidence under federal education law.',
        site: {
          arms: [
            { arm: 'intervention', students: hidden, mean: null },
            { arm: 'comparison', students: hidden, mean: null },
          ],
          totalStudents: { value: 40, suppressed: false },
          note: 'Your school’s figures for each group are not shown: one group has fewer than 10 students, and showing the other would reveal it.',
        },
      },
    ],
    cautions: ['These figures describe groups of students, never individual students or teachers.'],
    ...overrides,
  };
}

describe('SchoolFacts', () => {
  it('shows "fewer than 10 students" where the API hid a count, keeps the total, and explains why', () => {
    render(<SchoolFacts facts={facts()} />);
    const taking = screen.getByRole('table', { name: 'Classrooms and students with scores, by group' });
    const rows = within(taking).getAllByRole('row');
    expect(within(rows[1]).getByRole('rowheader')).toHaveTextContent('Intervention classrooms');
    expect(rows[1]).toHaveTextContent('fewer than 10 students');
    expect(rows[2]).toHaveTextContent('fewer than 10 students');
    expect(within(taking).getByText('40')).toBeInTheDocument();
    expect(screen.getByText(/Student numbers by group are not shown/)).toBeInTheDocument();

    const own = screen.getByRole('table', { name: 'Willow Lane Elementary on its own' });
    expect(within(own).getAllByText('fewer than 10 students')).toHaveLength(2);
    expect(within(own).getAllByText('not shown')).toHaveLength(2);
  });

  it('shows the locked result with its effect size, interval, improvement index and whether it met the test', () => {
    render(<SchoolFacts facts={facts()} />);
    expect(screen.getByRole('heading', { level: 4, name: 'Reading fluency at Spring' })).toBeInTheDocument();
    expect(screen.getByText('Met the pre-registered test')).toBeInTheDocument();
    expect(screen.getByText('0.31')).toBeInTheDocument();
    expect(screen.getByText('95% interval 0.12 to 0.51')).toBeInTheDocument();
    expect(screen.getByText('+12')).toBeInTheDocument();
    expect(screen.getByText('p = .040')).toBeInTheDocument();
    expect(screen.getByText(/Room 2/).closest('li')).toHaveTextContent('returned for corrections');
  });

  it('shows the evidence verdict’s one-sentence wording under the result, and nothing when a result has none', () => {
    const { unmount } = render(<SchoolFacts facts={facts()} />);
    expect(screen.getByTestId('evidence-wording')).toHaveTextContent(
      'Evidence preview, not a review (the evidence reviewers decide): this comparison would meet the evidence standards with reservations and would count as promising evidence under federal education law.',
    );
    unmount();
    render(<SchoolFacts facts={facts({ results: [{ ...facts().results[0], evidence: null }] })} />);
    expect(screen.queryByTestId('evidence-wording')).not.toBeInTheDocument();
  });

  it('shows a yes/no result as each group’s share answering yes, its yes count of the students, the difference in points and the Cox index — no Hedges’ g or average score', () => {
    const base = facts().results[0];
    const yesNoResult = {
      ...base,
      measureName: 'Read at grade level by spring',
      district: { ...base.district, analysis: 'linear-probability' as const, estimate: 0.0712, ci: [0.012, 0.131] as [number, number], p: 0.021 },
      yesNo: {
        yesIsGood: true,
        arms: [
          { arm: 'intervention' as const, yes: { value: 84, suppressed: false }, no: { value: 116, suppressed: false }, proportion: 0.42 },
          { arm: 'comparison' as const, yes: { value: 70, suppressed: false }, no: { value: 130, suppressed: false }, proportion: 0.35 },
        ],
        coxIndex: { value: 0.1796, improvementIndex: 7.12 },
      },
      site: { arms: [{ arm: 'intervention' as const, students: { value: 24, suppressed: false }, mean: 0.5 }, { arm: 'comparison' as const, students: { value: 26, suppressed: false }, mean: 0.3846 }], totalStudents: { value: 50, suppressed: false }, note: null },
    };
    render(<SchoolFacts facts={facts({ results: [yesNoResult] })} />);
    const district = screen.getByTestId('yes-no-district');
    expect(district).toHaveTextContent('Answered yes, intervention classrooms42 %84 of 200 students');
    expect(district).toHaveTextContent('Answered yes, comparison classrooms35 %70 of 200 students');
    expect(district).toHaveTextContent('Difference+7.1 points95% interval 1.2 to 13.1');
    expect(district).toHaveTextContent('p = .021; Cox index 0.18, improvement index +7');
    const own = screen.getByRole('table', { name: 'Willow Lane Elementary on its own' });
    expect(within(own).getByRole('columnheader', { name: 'Answered yes' })).toBeInTheDocument();
    expect(within(own).getByRole('row', { name: /Intervention/ })).toHaveTextContent('50 %');
    expect(screen.queryByText(/Hedges|Average score/)).not.toBeInTheDocument();
  });

  it('when the server withheld a yes/no count, then the shares, difference and p read “Not shown”', () => {
    const base = facts().results[0];
    const hiddenResult = {
      ...base,
      district: { ...base.district, g: null, gCi: null, improvementIndex: null, estimate: null, ci: null, p: null },
      yesNo: {
        yesIsGood: true,
        arms: [
          { arm: 'intervention' as const, yes: hidden, no: hidden, proportion: null },
          { arm: 'comparison' as const, yes: { value: 70, suppressed: false }, no: { value: 130, suppressed: false }, proportion: null },
        ],
        coxIndex: null,
      },
    };
    render(<SchoolFacts facts={facts({ results: [hiddenResult] })} />);
    const district = screen.getByTestId('yes-no-district');
    expect(within(district).getAllByText('Not shown')).toHaveLength(3);
    expect(district).toHaveTextContent('fewer than 10 students in a group');
    expect(district).not.toHaveTextContent(/p = |Cox/);
  });

  it('shows counts of 10 or more as numbers, and no locked result before there is one', () => {
    render(
      <SchoolFacts
        facts={facts({
          results: [],
          participation: {
            arms: [
              { arm: 'intervention', classrooms: 2, students: { value: 24, suppressed: false } },
              { arm: 'comparison', classrooms: 2, students: { value: 26, suppressed: false } },
            ],
            classrooms: 4,
            students: { value: 50, suppressed: false },
            note: null,
          },
        })}
      />,
    );
    expect(screen.queryByText('fewer than 10 students')).not.toBeInTheDocument();
    expect(screen.getByText('24')).toBeInTheDocument();
    expect(screen.queryByRole('heading', { name: /locked result/ })).not.toBeInTheDocument();
  });
});

import type { RosterImport } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { RosterHistory } from '@/features/sites/components/roster-history';
import { formatDateTime } from '@/lib/format';

const id = '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11';
const entry = (changes: Partial<RosterImport>, importedAt: string): RosterImport => ({
  id: `${id.slice(0, -1)}${importedAt.slice(9, 10)}`,
  studyId: id,
  importedAt,
  importedBy: 'coordinator@evenhand.test',
  sitesEnrolled: 0,
  classroomsCreated: 0,
  classroomsUpdated: 0,
  studentsJoined: 0,
  studentsRemoved: 0,
  studentsLeft: 0,
  invitationsSent: 0,
  classrooms: [],
  ...changes,
});

describe('the list of roster imports', () => {
  it('when imports exist, then each says when, by whom and only what changed, newest first as given', () => {
    const imports = [
      entry({ studentsJoined: 1, studentsLeft: 2, classroomsUpdated: 1 }, '2026-12-03T09:30:00.000Z'),
      entry({ sitesEnrolled: 2, classroomsCreated: 4, studentsJoined: 48, invitationsSent: 5, importedBy: null }, '2026-12-01T14:00:00.000Z'),
      entry({}, '2026-12-02T08:00:00.000Z'),
    ];
    render(<RosterHistory imports={imports} loading={false} error={null} />);
    const list = document.querySelector('ol')!;
    const items = [...list.children] as HTMLElement[];
    expect(items).toHaveLength(3);
    expect(items[0]).toHaveTextContent(`${formatDateTime('2026-12-03T09:30:00.000Z')} by coordinator@evenhand.test`);
    expect(within(items[0]).getAllByRole('listitem').map((li) => li.textContent)).toEqual(['1 classroom updated', '1 student joined', '2 students left (attrition)']);
    expect(items[0].querySelector('time')).toHaveAttribute('dateTime', '2026-12-03T09:30:00.000Z');
    expect(within(items[1]).getAllByRole('listitem').map((li) => li.textContent)).toEqual(['2 sites enrolled', '4 classrooms added', '48 students joined', '5 invitations e-mailed']);
    expect(items[1]).toHaveTextContent('by a deleted account');
    expect(within(items[2]).getAllByRole('listitem').map((li) => li.textContent)).toEqual(['Nothing changed']);
  });

  it('when there is none yet, or the list fails, then it says so', () => {
    const { rerender } = render(<RosterHistory imports={[]} loading={false} error={null} />);
    expect(screen.getByText('No OneRoster export has been imported into this study yet.')).toBeInTheDocument();
    rerender(<RosterHistory imports={[]} loading={false} error={new Error('The server is unavailable')} />);
    expect(screen.getByRole('alert')).toHaveTextContent('The imports could not be loaded: The server is unavailable');
  });
});

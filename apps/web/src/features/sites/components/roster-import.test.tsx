import type { RosterImport, RosterPreview } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { describe, expect, it, vi } from 'vitest';
import { RosterImportPanel } from '@/features/sites/components/roster-import';

const siteId = '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11';
const klass = (sourcedId: string, title: string, blocked: string | null = null) => ({
  sourcedId,
  title,
  grade: '04',
  teacher: { name: 'Ondine Fictive-ALD1', email: 'teacher.ald1@roster.evenhand.test' },
  students: 12,
  classroomId: null,
  joined: 0,
  left: 0,
  blocked,
});
const preview: RosterPreview = {
  drawCommitted: false,
  totals: { schools: 1, classes: 3, students: 36 },
  schools: [
    {
      sourcedId: 'org-ald',
      name: 'Alderquill Elementary',
      identifier: 'ALD',
      siteId,
      enrolled: false,
      principal: null,
      principalFromExport: false,
      classes: [klass('cls-1', 'Reading 1'), klass('cls-2', 'Reading 2'), klass('cls-3', 'Reading 3', 'The export lists no students in this class')],
    },
  ],
};
const result: RosterImport = {
  id: siteId,
  studyId: siteId,
  importedAt: '2026-12-02T17:00:00.000Z',
  importedBy: 'coordinator@evenhand.test',
  sitesEnrolled: 1,
  classroomsCreated: 1,
  classroomsUpdated: 0,
  studentsJoined: 12,
  studentsRemoved: 0,
  studentsLeft: 0,
  invitationsSent: 1,
  classrooms: [],
};
const file = new File(['PK'], 'roster.zip', { type: 'application/zip' });

describe('RosterImportPanel', () => {
  it('previews the export, lets a class be left out, and imports only the chosen classes of the chosen school', { timeout: 30_000 }, async () => {
    const user = userEvent.setup();
    const onPreview = vi.fn().mockResolvedValue(preview);
    const onImport = vi.fn().mockResolvedValue(result);
    render(<RosterImportPanel onPreview={onPreview} onImport={onImport} onClose={vi.fn()} />);
    await user.upload(screen.getByLabelText('Roster export'), file);
    await user.click(screen.getByRole('button', { name: 'Preview the roster' }));

    expect(onPreview).toHaveBeenCalledWith([file]);
    expect(await screen.findByText(/The export lists 1 school, 3 classes and 36 students/)).toBeInTheDocument();
    expect(screen.getByText('The export names no principal: name one here, or later.', { exact: false })).toBeInTheDocument();
    await user.type(screen.getByLabelText('Principal’s name'), 'Marlo Fictive');
    await user.type(screen.getByLabelText('Principal’s e-mail address'), 'marlo.fictive@roster.evenhand.test');
    const table = screen.getByRole('table', { name: 'Classes at Alderquill Elementary' });
    const blocked = within(table).getByRole('checkbox', { name: /Reading 3/ });
    expect(blocked).toBeDisabled();
    expect(blocked).not.toBeChecked();
    await user.click(within(table).getByRole('checkbox', { name: /Reading 2/ }));
    await user.click(screen.getByRole('button', { name: 'Import the chosen classes' }));

    expect(onImport).toHaveBeenCalledWith([file], {
      schools: ['org-ald'],
      classes: ['cls-1'],
      principals: { 'org-ald': { name: 'Marlo Fictive', email: 'marlo.fictive@roster.evenhand.test' } },
    });
    expect(await screen.findByRole('status')).toHaveTextContent(
      'The roster is imported: 1 classroom added, 12 students joined, 1 person invited by e-mail.',
    );
  });

  it('asks for a file before previewing', async () => {
    const user = userEvent.setup();
    const onPreview = vi.fn();
    render(<RosterImportPanel onPreview={onPreview} onImport={vi.fn()} onClose={vi.fn()} />);
    await user.click(screen.getByRole('button', { name: 'Preview the roster' }));
    expect(onPreview).not.toHaveBeenCalled();
    expect(await screen.findByRole('alert')).toHaveTextContent('Choose the export’s zip, or its CSV files, first.');
  });
});

import type { RoleGrant, ToDoItem } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import { MemoryRouter } from 'react-router-dom';
import { describe, expect, it } from 'vitest';
import { ToDoList } from '@/features/home/components/to-do-list';

const study = { id: '6d5360dc-b3e4-4f5f-b5da-981c2b7cee10', title: 'Lantern Reading Routine in grades 3 and 4' };
const as = (role: RoleGrant['role']): RoleGrant[] => [{ role, siteId: null }];

function show(items: ToDoItem[], grants: RoleGrant[]) {
  render(
    <MemoryRouter>
      <ToDoList items={items} grants={grants} />
    </MemoryRouter>,
  );
}

describe('ToDoList', () => {
  it('when nothing waits for a coordinator, then it says so and names what will appear here', () => {
    show([], as('coordinator'));
    expect(screen.getByText('Nothing waits for you right now.')).toBeVisible();
    expect(screen.getByText(/score sheets to review, late classrooms, schools to enrol and draws to run appear here/)).toBeVisible();
    expect(screen.queryByRole('listitem')).toBeNull();
  });

  it('when nothing waits for a research lead, a reviewer or an admin, then each is told what their list will hold', () => {
    show([], as('research_lead'));
    expect(screen.getByText(/plans to seal and confirmatory results to lock appear here/)).toBeVisible();
    show([], as('reviewer'));
    expect(screen.getByText(/locked results to review appear here/)).toBeVisible();
    show([], as('admin'));
    expect(screen.getByText(/invitations nobody has accepted and accounts without a role appear here/)).toBeVisible();
  });

  it('lists each thing with its count and study, linked to the tab where it is done', () => {
    show(
      [
        { kind: 'sheets_to_review', count: 1, study },
        { kind: 'late_sheets', count: 3, study },
      ],
      as('coordinator'),
    );
    const [review, late] = screen.getAllByRole('listitem');
    expect(within(review).getByRole('link', { name: '1 score sheet to review' })).toHaveAttribute('href', `/studies/${study.id}/score-sheets`);
    expect(review).toHaveTextContent(study.title);
    expect(review).toHaveTextContent('Accept each one, or return it to its teacher with the reasons.');
    expect(within(late).getByRole('link', { name: '3 score sheets are late' })).toHaveAttribute('href', `/studies/${study.id}/score-sheets`);
  });

  it('links the lead’s results to lock to Comparisons and the admin’s accounts to Accounts', () => {
    show([{ kind: 'runs_to_lock', count: 2, study }], as('research_lead'));
    expect(screen.getByRole('link', { name: '2 confirmatory results to lock' })).toHaveAttribute('href', `/studies/${study.id}/comparisons`);
    show([{ kind: 'accounts_without_role', count: 1, study: null }], as('admin'));
    expect(screen.getByRole('link', { name: '1 account has no role' })).toHaveAttribute('href', '/accounts');
  });

  it('when the person may not open the tab, then the thing is named without a link', () => {
    show([{ kind: 'undeliverable_digests', count: 2, study }], as('reviewer'));
    expect(screen.getByText('2 digests could not be delivered')).toBeVisible();
    expect(screen.queryByRole('link')).toBeNull();
  });
});

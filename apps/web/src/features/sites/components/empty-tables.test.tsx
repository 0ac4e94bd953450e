import { render, screen } from '@testing-library/react';
import { describe, expect, it } from 'vitest';
import { ClassroomsTable } from '@/features/sites/components/classrooms-table';
import { SitesTable } from '@/features/sites/components/sites-table';

describe('the empty Sites & classes tables', () => {
  it('when no school is enrolled, then the sites table says who enrols them and how', () => {
    render(<SitesTable sites={[]} loading={false} error={null} />);
    expect(screen.getByText(/No school is enrolled yet\. The coordinator enrols each school .* from Enrol a site/)).toBeVisible();
  });

  it('when no classroom is added, then the classrooms table says they follow the schools, one by one or from a CSV file', () => {
    render(<ClassroomsTable classrooms={[]} sites={[]} loading={false} error={null} />);
    expect(screen.getByText(/No classroom is added yet\. .* one by one or from a CSV file/)).toBeVisible();
  });
});

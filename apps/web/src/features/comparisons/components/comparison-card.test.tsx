import type { Comparison } from '@evenhand/entities';
import { QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen, waitFor } from '@testing-library/react';
import { MemoryRouter } from 'react-router-dom';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { createQueryClient } from '@/app/query-client';
import { ComparisonCard } from '@/features/comparisons/components/comparison-card';
import { formatDateTime } from '@/lib/format';

const comparison: Comparison = {
  id: '529d2883-2949-401e-bb2b-85800c4103a5',
  studyId: 'c40f0c41-126b-4104-bf98-f984f59883c5',
  measureId: 'edb03069-b06f-4d5e-8fd8-259910f2635c',
  measureName: 'Oral reading fluency',
  waveId: '60960c7e-9499-4073-b98b-7b4fda541b68',
  waveName: 'Spring 2026',
  label: 'Oral reading fluency at Spring 2026',
  unitOfAnalysis: 'student',
  primaryTest: 'welch',
  covariate: 'baseline',
  prespecified: true,
  isPrimary: true,
  scheduleCron: null,
  scheduleTimezone: 'UTC',
  nextMonitoringRunAt: null,
  latestRun: null,
  latestFinishedRunId: null,
  lockedRunId: null,
};

const finishedRunId = '7c0e54a1-5d56-4c84-a3c4-2f3f3c4f1b10';
const failedRun: NonNullable<Comparison['latestRun']> = {
  id: 'e2c9b0f4-3a53-4cfa-9b8a-8f1de3a2c6d7',
  comparisonId: comparison.id,
  studyId: comparison.studyId,
  kind: 'monitoring',
  state: 'failed',
  reason: null,
  planVersion: 1,
  engineVersion: null,
  dataSha256: null,
  error: 'The comparison arm has fewer than 2 students',
  queuedAt: '2026-05-04T02:00:00.000Z',
  finishedAt: '2026-05-04T02:00:05.000Z',
  lockedAt: null,
  scheduledFor: '2026-05-04T02:00:00.000Z',
  multiplicity: null,
};

function renderCard(overrides: Partial<Comparison>, onQueue = vi.fn(async () => undefined), onSetSchedule = vi.fn(async () => undefined)) {
  render(
    <QueryClientProvider client={createQueryClient()}>
      <MemoryRouter>
        <ComparisonCard
          studyId={comparison.studyId}
          comparison={{ ...comparison, ...overrides }}
          canRun
          onQueue={onQueue}
          onSetSchedule={onSetSchedule}
          queueError={null}
          queueing={null}
        />
      </MemoryRouter>
    </QueryClientProvider>,
  );
  return onQueue;
}

beforeAll(() => {
  // jsdom has no modal dialogs.
  HTMLDialogElement.prototype.showModal ??= function showModal(this: HTMLDialogElement) {
    this.setAttribute('open', '');
  };
  HTMLDialogElement.prototype.close ??= function close(this: HTMLDialogElement) {
    this.removeAttribute('open');
  };
});

describe('ComparisonCard', () => {
  it('queues a confirmatory run of a pre-specified comparison straight away when nothing is locked', () => {
    const onQueue = renderCard({});
    fireEvent.click(screen.getByRole('button', { name: 'Run confirmatory' }));
    expect(onQueue).toHaveBeenCalledWith({ kind: 'confirmatory' });
  });

  it('offers no confirmatory run for an exploratory comparison, and marks it exploratory', () => {
    renderCard({ prespecified: false, isPrimary: false });
    expect(screen.queryByRole('button', { name: 'Run confirmatory' })).not.toBeInTheDocument();
    expect(screen.getByRole('button', { name: 'Run a monitoring check' })).toBeInTheDocument();
    expect(screen.getByText('Exploratory')).toBeInTheDocument();
  });

  it('shows the monitoring schedule with its next run, or says none is left once the wave is over', () => {
    const next = '2026-05-05T02:00:00.000Z';
    renderCard({ scheduleCron: '0 2 * * *', scheduleTimezone: 'America/Chicago', nextMonitoringRunAt: next });
    const line = screen.getByTestId('schedule');
    expect(line).toHaveTextContent('0 2 * * * (America/Chicago)');
    expect(line).toHaveTextContent(`next ${formatDateTime(next)}`);
  });

  it('says no scheduled run is left when the schedule has no next run', () => {
    renderCard({ scheduleCron: '0 2 * * *', nextMonitoringRunAt: null });
    expect(screen.getByTestId('schedule')).toHaveTextContent('none left in this wave');
  });

  it('when the newest run failed, then it links the latest finished results', () => {
    renderCard({ latestRun: failedRun, latestFinishedRunId: finishedRunId });
    expect(screen.getByRole('link', { name: 'Read the latest finished results' })).toHaveAttribute('href', expect.stringContaining(finishedRunId));
  });

  it('asks for the reason before re-analysing a comparison whose result is locked', async () => {
    const onQueue = renderCard({ lockedRunId: '047a627e-ad19-407c-a49f-c5661803f170' });
    fireEvent.click(screen.getByRole('button', { name: 'Run confirmatory' }));
    expect(onQueue).not.toHaveBeenCalled();
    fireEvent.change(await screen.findByLabelText('Why are the data analysed again?'), { target: { value: 'Two sheets were corrected after the lock.' } });
    fireEvent.click(screen.getByRole('button', { name: 'Queue the re-analysis' }));
    await waitFor(() => expect(onQueue).toHaveBeenCalledWith({ kind: 'confirmatory', reason: 'Two sheets were corrected after the lock.' }));
  });

  it('when the lead picks every weekday at a time, then the cron written underneath and the time zone are sent', async () => {
    const onSetSchedule = vi.fn(async () => undefined);
    renderCard({}, vi.fn(async () => undefined), onSetSchedule);
    fireEvent.click(screen.getByRole('button', { name: 'Schedule automatic checks' }));
    fireEvent.click(screen.getByRole('radio', { name: 'Every weekday at' }));
    fireEvent.change(screen.getByLabelText('Time, every weekday at'), { target: { value: '06:30' } });
    expect(screen.getByText('30 6 * * 1-5')).toBeInTheDocument();
    fireEvent.change(screen.getByRole('textbox', { name: /Time zone/ }), { target: { value: 'America/Chicago' } });
    fireEvent.click(screen.getByRole('button', { name: 'Save the schedule' }));
    await waitFor(() => expect(onSetSchedule).toHaveBeenCalledWith({ scheduleCron: '30 6 * * 1-5', scheduleTimezone: 'America/Chicago' }));
  });

  it('when a custom cron is malformed, then it is explained before anything is sent', async () => {
    const onSetSchedule = vi.fn(async () => undefined);
    renderCard({}, vi.fn(async () => undefined), onSetSchedule);
    fireEvent.click(screen.getByRole('button', { name: 'Schedule automatic checks' }));
    fireEvent.click(screen.getByRole('radio', { name: 'Custom (a cron expression)' }));
    const cron = screen.getByRole('textbox', { name: /Cron expression/ });
    fireEvent.change(cron, { target: { value: 'every night' } });
    fireEvent.click(screen.getByRole('button', { name: 'Save the schedule' }));
    expect(await screen.findByText(/Use five cron fields/)).toBeInTheDocument();
    expect(onSetSchedule).not.toHaveBeenCalled();
    fireEvent.change(cron, { target: { value: '0 2 1 * *' } });
    fireEvent.click(screen.getByRole('button', { name: 'Save the schedule' }));
    await waitFor(() => expect(onSetSchedule).toHaveBeenCalledWith({ scheduleCron: '0 2 1 * *', scheduleTimezone: 'UTC' }));
  });

  it('when the result is locked, then no schedule can be set', () => {
    renderCard({ lockedRunId: '0b8f1f8e-4d8e-4a8f-9c5e-1e2d3c4b5a69' });
    expect(screen.queryByRole('button', { name: /automatic checks/ })).not.toBeInTheDocument();
  });
});

import type { Measure, PlanContent, Wave } from '@evenhand/entities';
import { mdes } from '@evenhand/stats';
import { render, screen, waitFor } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { describe, expect, it, vi } from 'vitest';
import { blankPlan, PlanForm } from '@/features/plan/components/plan-form';

const studyId = '5b0c7a1e-2f4d-4e6a-9b8c-1d2e3f4a5b6c';
const measures: Measure[] = [
  { id: '0f6e2d1c-3b4a-4c5d-8e9f-a0b1c2d3e4f5', studyId, name: 'Reading fluency', scale: 'score', minScore: 0, maxScore: 250, higherIsBetter: true, kind: 'achievement' },
];
const waves: Wave[] = [
  { id: '1a2b3c4d-5e6f-4a7b-8c9d-0e1f2a3b4c5d', studyId, kind: 'baseline', name: 'Autumn', opensOn: '2026-09-14', closesOn: '2026-10-09' },
  { id: '2b3c4d5e-6f7a-4b8c-9d0e-1f2a3b4c5d6e', studyId, kind: 'outcome', name: 'Spring', opensOn: '2027-04-26', closesOn: '2027-05-21' },
];

function renderForm(onSaveDraft = vi.fn().mockResolvedValue(undefined)) {
  render(<PlanForm initial={blankPlan("classroom")} measures={measures} waves={waves} unit="classroom" onSaveDraft={onSaveDraft} onSeal={vi.fn()} />);
  return onSaveDraft;
}

async function fillInTheRequiredFields(user: ReturnType<typeof userEvent.setup>) {
  await user.selectOptions(screen.getByLabelText('Primary measure'), measures[0].id);
  await user.selectOptions(screen.getByLabelText('Primary wave'), waves[1].id);
  await user.click(screen.getByLabelText('Hypothesis'));
  await user.paste('Classrooms with the routine read more fluently in spring.');
  await user.type(screen.getByLabelText('Planned sites'), '4');
  await user.type(screen.getByLabelText('Planned classrooms'), '16');
  await user.type(screen.getByLabelText('Planned students per classroom'), '22');
}

// Typing into a whole plan form with its live chart is slow in jsdom.
describe('PlanForm', { timeout: 20_000 }, () => {
  it('asks for a written justification only once a one-sided test is chosen, and refuses to save without it', async () => {
    const user = userEvent.setup();
    const onSaveDraft = renderForm();
    await fillInTheRequiredFields(user);
    expect(screen.queryByLabelText('Why one-sided')).not.toBeInTheDocument();

    await user.click(screen.getByLabelText('One-sided: the intervention scores higher'));
    expect(screen.getByLabelText('Why one-sided')).toBeInTheDocument();
    await user.click(screen.getByRole('button', { name: 'Save draft' }));

    expect(await screen.findByText('A one-sided test needs a written justification')).toBeInTheDocument();
    expect(screen.getByLabelText('Why one-sided')).toHaveAttribute('aria-invalid', 'true');
    expect(onSaveDraft).not.toHaveBeenCalled();
  });

  it('registers the cautious attrition boundary unless chosen; the optimistic one needs a reason, and the evidence preview follows the choice', async () => {
    const user = userEvent.setup();
    const onSaveDraft = renderForm();
    await fillInTheRequiredFields(user);
    expect(screen.getByLabelText('Cautious: the intervention could affect which students leave')).toBeChecked();
    const preview = screen.getByTestId('evidence-preview');
    expect(preview).toHaveTextContent('the cautious boundary allows');

    await user.click(screen.getByLabelText('Optimistic: the intervention is unlikely to affect which students leave'));
    expect(preview).toHaveTextContent('the optimistic boundary allows');
    await user.click(screen.getByRole('button', { name: 'Save draft' }));
    expect(await screen.findByText('Say why the intervention is unlikely to affect which students leave')).toBeInTheDocument();
    expect(onSaveDraft).not.toHaveBeenCalled();

    await user.click(screen.getByLabelText('Why the optimistic boundary'));
    await user.paste('Students are tested in regular lessons whatever their classroom does.');
    await user.click(screen.getByRole('button', { name: 'Save draft' }));
    await waitFor(() => expect(onSaveDraft).toHaveBeenCalledTimes(1));
    expect(onSaveDraft.mock.calls[0][0]).toMatchObject({ attritionBoundary: 'optimistic', attritionBoundaryReason: 'Students are tested in regular lessons whatever their classroom does.' });
  });

  it("asks why Student's pooled test is chosen over Welch's, and refuses to save without a reason", async () => {
    const user = userEvent.setup();
    const onSaveDraft = renderForm();
    await fillInTheRequiredFields(user);
    expect(screen.queryByLabelText('Why Student’s pooled test')).not.toBeInTheDocument();

    await user.click(screen.getByLabelText('Student’s pooled t test: both arms share one spread'));
    await user.click(screen.getByRole('button', { name: 'Save draft' }));

    expect(await screen.findByText("Say why Student's pooled test is preferred over Welch's")).toBeInTheDocument();
    expect(onSaveDraft).not.toHaveBeenCalled();

    await user.click(screen.getByLabelText('Why Student’s pooled test'));
    await user.paste('Both arms come from one screening with equal spread.');
    await user.click(screen.getByRole('button', { name: 'Save draft' }));
    await waitFor(() => expect(onSaveDraft).toHaveBeenCalledTimes(1));
    expect(onSaveDraft.mock.calls[0][0]).toMatchObject({ primaryTest: 'student', primaryTestReason: 'Both arms come from one screening with equal spread.' });
  });

  it('saves the defaults of common practice for a classroom-assigned study: alpha .05, two-sided, the two-level model, the standard ICC, and no leftover reasons', async () => {
    const user = userEvent.setup();
    const onSaveDraft = renderForm();
    await fillInTheRequiredFields(user);
    // A reason typed for a choice later undone is not registered with the plan.
    await user.click(screen.getByLabelText('One-sided: the intervention scores lower'));
    await user.click(screen.getByLabelText('Why one-sided'));
    await user.paste('Only a decline would matter to the board.');
    await user.click(screen.getByLabelText('Two-sided: either arm may come out ahead'));
    await user.click(screen.getByRole('button', { name: 'Save draft' }));

    await waitFor(() => expect(onSaveDraft).toHaveBeenCalledTimes(1));
    const saved: PlanContent = onSaveDraft.mock.calls[0][0];
    expect(saved).toMatchObject({
      alpha: 0.05,
      alternative: 'two-sided',
      alternativeJustification: '',
      primaryTest: 'two-level',
      iccSource: 'default',
      icc: null,
      plannedSites: 4,
      plannedClassrooms: 16,
      plannedStudentsPerClassroom: 22,
    });
  });

  it('updates the planning panel as the planned classrooms are typed, for the registered two-level model with 4 schools as blocks', async () => {
    const user = userEvent.setup();
    renderForm();
    await fillInTheRequiredFields(user);
    const expected = (clusters: number) =>
      mdes({ design: 'cluster', clusters, clusterSize: 22, icc: 0.2, r2Level1: 0, covariates: 3, p: 0.5, alpha: 0.05, alternative: 'two-sided' }).mdes.toFixed(2);
    await waitFor(() => expect(screen.getByTestId('planning-mdes')).toHaveTextContent(`${expected(16)} SD`));

    await user.type(screen.getByLabelText('Planned classrooms'), '0');
    await waitFor(() => expect(screen.getByTestId('planning-mdes')).toHaveTextContent(`${expected(160)} SD`));
  });
});

import type { RoleGrant, Study } from '@evenhand/entities';
import { Link } from 'react-router-dom';
import { canOpen, hasRole, studyPath, studyTabs, type StudyTab } from '@/lib/navigation';

export interface NextStep {
  title: string;
  detail: string;
  /** done: already behind the study; now: the person's to do; waiting: someone else's to do first. */
  state: 'done' | 'now' | 'waiting';
  tab?: StudyTab;
}

/** What each role does next with this study, from its state and counts. */
export function nextStepsFor(study: Study, grants: readonly RoleGrant[]): NextStep[] {
  const sealed = study.planVersion !== null;
  const drawn = study.drawCommittedAt !== null;
  const { measures, waves, sites, classrooms } = study.counts;
  const steps: NextStep[] = [];

  if (hasRole(grants, 'research_lead')) {
    steps.push(
      {
        title: 'Add the measures',
        detail: 'Each outcome instrument with its score range, direction and kind (achievement or behaviour).',
        state: measures > 0 ? 'done' : 'now',
        tab: 'plan',
      },
      {
        title: 'Add the waves',
        detail: 'A baseline wave for the pretest and an outcome wave for the posttest, with their dates.',
        state: waves >= 2 ? 'done' : 'now',
        tab: 'plan',
      },
      {
        title: 'Seal the plan',
        detail: 'Write the pre-registration and seal it: it is timestamped and hashed, and changes afterwards are amendments.',
        state: sealed ? 'done' : 'now',
        tab: 'plan',
      },
    );
    if (sealed) {
      steps.push({
        title: drawn ? 'Check the data' : 'Wait for the draw',
        detail: drawn
          ? 'As scores arrive, check their quality, attrition and baseline equivalence, then run the pre-specified comparisons.'
          : 'The coordinator enrols the schools and classrooms and runs the draw.',
        state: drawn ? 'now' : 'waiting',
        tab: drawn ? 'checks' : 'draw',
      });
    }
  }

  if (hasRole(grants, 'coordinator')) {
    steps.push(
      {
        title: 'Enrol sites',
        detail: 'The schools taking part, each with its principal, who is invited by e-mail.',
        state: sites > 0 ? 'done' : 'now',
        tab: 'sites',
      },
      {
        title: 'Add classrooms',
        detail: 'Each classroom with its cohort, grade, expected size and teacher — one by one or from a CSV file.',
        state: classrooms >= 2 ? 'done' : 'now',
        tab: 'sites',
      },
      {
        title: 'Run the draw',
        detail: sealed
          ? 'Preview the random assignment, then commit it. Once committed it can never change.'
          : 'The draw opens once the research lead has sealed the plan.',
        state: drawn ? 'done' : sealed ? 'now' : 'waiting',
        tab: 'draw',
      },
    );
    if (drawn) {
      steps.push({
        title: 'Follow the score sheets',
        detail: 'Watch which classrooms have entered their scores for each wave, and remind the late ones.',
        state: 'now',
        tab: 'scoreSheets',
      });
    }
  }

  if (hasRole(grants, 'reviewer') && !hasRole(grants, 'research_lead')) {
    steps.push({
      title: sealed ? 'Read the sealed plan' : 'Wait for the sealed plan',
      detail: sealed
        ? 'The registered plan, every amendment with its reason, and what each one changed.'
        : 'There is nothing to review until the research lead seals the plan.',
      state: sealed ? 'now' : 'waiting',
      tab: 'plan',
    });
    if (drawn) {
      steps.push({ title: 'Verify the draw', detail: 'Re-derive the random assignment from its recorded seed.', state: 'now', tab: 'draw' });
    }
  }

  if (hasRole(grants, 'admin') && steps.length === 0) {
    steps.push({ title: 'Read the audit trail', detail: 'Every change to this study, who made it and when.', state: 'now', tab: 'audit' });
  }

  return steps.filter((s) => !s.tab || canOpen(studyTabs[s.tab], grants));
}

const marks: Record<NextStep['state'], { symbol: string; label: string; className: string }> = {
  done: { symbol: '✓', label: 'Done', className: 'bg-accent-soft text-accent-strong' },
  now: { symbol: '→', label: 'To do', className: 'bg-accent text-white' },
  waiting: { symbol: '…', label: 'Waiting', className: 'bg-sunken text-ink-muted' },
};

export function NextSteps({ study, steps }: { study: Study; steps: NextStep[] }) {
  if (steps.length === 0) return <p className="text-ink-muted">There is nothing for you to do in this study.</p>;
  return (
    <ol className="space-y-4">
      {steps.map((step) => {
        const mark = marks[step.state];
        return (
          <li key={step.title} className="flex gap-3">
            <span aria-hidden="true" className={`mt-0.5 flex size-7 shrink-0 items-center justify-center rounded-full font-bold ${mark.className}`}>
              {mark.symbol}
            </span>
            <div>
              <p className="font-semibold">
                <span className="sr-only">{mark.label}: </span>
                {step.tab && step.state !== 'waiting' ? <Link to={studyPath(study.id, step.tab)}>{step.title}</Link> : step.title}
              </p>
              <p className="text-ink-muted">{step.detail}</p>
            </div>
          </li>
        );
      })}
    </ol>
  );
}

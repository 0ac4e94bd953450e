import { planBoundary, type Measure, type PlanContent, type UnitOfAssignment, type Wave } from '@evenhand/entities';
import { useQuery, type QueryClient } from '@tanstack/react-query';
import { useState, type ReactNode } from 'react';
import type { LoaderFunctionArgs } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { EmptyState } from '@/components/ui/empty-state';
import { Loading } from '@/components/ui/spinner';
import { Section } from '@/components/ui/section';
import { useSession } from '@/features/auth/api';
import { planQueryOptions, useAddMeasure, useAddWave, useAmendPlan, useSaveDraft, useSealPlan } from '@/features/plan/api';
import { AddMeasureForm, AddWaveForm, MeasuresList, WavesList } from '@/features/plan/components/measures-and-waves';
import { blankPlan, PlanForm } from '@/features/plan/components/plan-form';
import { Fingerprint, PlanSummary, VersionHistory } from '@/features/plan/components/plan-record';
import { PlanningPanel } from '@/features/plan/components/planning-panel';
import { formatDateTime } from '@/lib/format';
import { hasRole } from '@/lib/navigation';
import { measuresQueryOptions, wavesQueryOptions } from '@/lib/queries';
import { useCurrentStudy } from '@/lib/study';

export function planLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    const studyId = params.studyId!;
    await Promise.all([
      queryClient.ensureQueryData(planQueryOptions(studyId)),
      queryClient.ensureQueryData(measuresQueryOptions(studyId)),
      queryClient.ensureQueryData(wavesQueryOptions(studyId)),
    ]);
    return null;
  };
}

export function PlanPage() {
  const study = useCurrentStudy();
  const grants = useSession().data?.roles ?? [];
  const lead = hasRole(grants, 'research_lead');
  const plan = useQuery(planQueryOptions(study.id));
  const measures = useQuery(measuresQueryOptions(study.id));
  const waves = useQuery(wavesQueryOptions(study.id));
  const addMeasure = useAddMeasure(study.id);
  const addWave = useAddWave(study.id);
  const saveDraft = useSaveDraft(study.id);
  const seal = useSealPlan(study.id);
  const amend = useAmendPlan(study.id);
  const [amending, setAmending] = useState(false);
  const [notice, setNotice] = useState<string | null>(null);

  if (!plan.data || !measures.data || !waves.data) {
    const error = plan.error ?? measures.error ?? waves.error;
    return error ? <Alert tone="error">{error.message}</Alert> : <Loading label="Loading the plan…" />;
  }
  const refs = { measures: measures.data.items, waves: waves.data.items };
  const { sealed, draft, versions } = plan.data;
  const current = versions.at(-1);

  const measuresSection = (
    <Section
      title="Measures"
      description={sealed ? 'The outcome instruments the plan registered.' : 'The outcome instruments, each with its score range and direction.'}
    >
      <MeasuresList measures={refs.measures} />
      {lead && !sealed && <AddMeasureForm onAdd={(input) => addMeasure.mutateAsync(input)} />}
    </Section>
  );
  const wavesSection = (
    <Section title="Waves" description="The data-collection windows: a baseline before the intervention starts, an outcome after it.">
      <WavesList waves={refs.waves} />
      {lead && <AddWaveForm waves={refs.waves} onAdd={(input) => addWave.mutateAsync(input)} />}
    </Section>
  );

  if (!sealed) {
    return (
      <div className="space-y-12">
        <div aria-live="polite">{notice && <Alert tone="success">{notice}</Alert>}</div>
        <div className="grid gap-10 lg:grid-cols-2">
          {measuresSection}
          {wavesSection}
        </div>
        <Section
          title="The plan"
          description={
            lead
              ? 'Write the pre-registration, save it as a draft as often as you like, and seal it when it is complete.'
              : 'The research lead’s draft. It becomes the registered plan once sealed.'
          }
        >
          {lead ? (
            <PlanForm
              initial={{ ...blankPlan(study.unitOfAssignment), ...draft }}
              {...refs}
              unit={study.unitOfAssignment}
              quasiExperimental={study.quasiExperimental}
              onSaveDraft={(content) => saveDraft.mutateAsync(content)}
              onSeal={async (content) => {
                await seal.mutateAsync(content);
                setNotice('The plan is sealed. From now on it changes only by amendment.');
              }}
            />
          ) : draft ? (
            <PlanWithPanel plan={draft} refs={refs} unit={study.unitOfAssignment}>
              <p className="mb-4 text-ink-muted">Draft, not sealed: it may still change.</p>
            </PlanWithPanel>
          ) : (
            <EmptyState title="The plan is not sealed yet">
              <p>The research lead is writing the plan. It can be read here once it is sealed.</p>
            </EmptyState>
          )}
        </Section>
      </div>
    );
  }

  return (
    <div className="space-y-12">
      <div aria-live="polite">{notice && <Alert tone="success">{notice}</Alert>}</div>
      {current && (
        <Section title={`The plan in force: version ${current.version}`}>
          <PlanWithPanel plan={current.content} refs={refs} unit={study.unitOfAssignment}>
            <p>
              {current.version === 1 ? 'Sealed' : 'Amended'} on {formatDateTime(current.createdAt)} by {current.createdBy.name}
              {study.sealedAt && current.version > 1 ? `; first sealed on ${formatDateTime(study.sealedAt)}` : ''}.
            </p>
            <p className="mt-1 mb-5">
              SHA-256 of its canonical JSON: <Fingerprint sha256={current.sha256} />
            </p>
          </PlanWithPanel>
          {lead && !amending && (
            <Button
              variant="secondary"
              onClick={() => {
                setNotice(null);
                setAmending(true);
              }}
            >
              Amend the plan
            </Button>
          )}
        </Section>
      )}

      {lead && amending && current && (
        <Section
          title="Amend the plan"
          description="An amendment is a new version of the whole plan with the reason for the change. Earlier versions stay readable, and reviewers see what changed."
        >
          <PlanForm
            initial={{ ...current.content, attritionBoundary: planBoundary(current.content).boundary, reason: '' }}
            {...refs}
            unit={study.unitOfAssignment}
            quasiExperimental={study.quasiExperimental}
            onCancel={() => setAmending(false)}
            onAmend={async (amendment) => {
              const next = await amend.mutateAsync(amendment);
              setAmending(false);
              setNotice(`Version ${next.versions.at(-1)?.version ?? ''} is filed and now in force.`);
            }}
          />
        </Section>
      )}

      <Section title="Version history" description="Every sealed version, newest first, with what each amendment changed and why.">
        <VersionHistory versions={versions} {...refs} />
      </Section>

      <div className="grid gap-10 lg:grid-cols-2">
        {measuresSection}
        {wavesSection}
      </div>
    </div>
  );
}

/** A plan read-only, with what its planned numbers can detect beside it. */
function PlanWithPanel({ plan, refs, unit, children }: { plan: PlanContent; refs: { measures: Measure[]; waves: Wave[] }; unit: UnitOfAssignment; children?: ReactNode }) {
  const measure = refs.measures.find((m) => m.id === plan.primaryMeasureId);
  return (
    <div className="grid gap-8 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
      <div className="rounded-lg border border-line bg-surface p-5">
        {children}
        <PlanSummary plan={plan} {...refs} />
      </div>
      <PlanningPanel values={plan} context={{ unit, measureKind: measure?.kind ?? null, yesNo: measure?.scale === 'yes-no' }} />
    </div>
  );
}

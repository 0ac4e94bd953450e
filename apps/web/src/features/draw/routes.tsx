import type { Draw } from '@evenhand/entities';
import { useQuery, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import type { LoaderFunctionArgs } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { EmptyState } from '@/components/ui/empty-state';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { Field, TextInput } from '@/components/ui/field';
import { Loading } from '@/components/ui/spinner';
import { Section } from '@/components/ui/section';
import { useSession } from '@/features/auth/api';
import { drawQueryOptions, useCommitDraw, usePreviewDraw, useReassign } from '@/features/draw/api';
import { AssignmentsTable, BalanceTable } from '@/features/draw/components/draw-tables';
import { ReassignForm, ReassignmentsList } from '@/features/draw/components/reassignment';
import { VerifyDraw } from '@/features/draw/components/verify-draw';
import { formatDateTime } from '@/lib/format';
import { hasRole } from '@/lib/navigation';
import { useApiSubmit } from '@/lib/use-api-submit';
import { studyClassroomsQueryOptions, unitLabels, useCurrentStudy } from '@/lib/study';

export function drawLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    const studyId = params.studyId!;
    await Promise.all([queryClient.ensureQueryData(drawQueryOptions(studyId)), queryClient.ensureQueryData(studyClassroomsQueryOptions(studyId))]);
    return null;
  };
}

function DrawFacts({ draw }: { draw: Draw }) {
  return (
    <dl className="grid gap-x-8 gap-y-3 rounded-lg border border-line bg-surface p-5 sm:grid-cols-2">
      <div>
        <dt className="text-sm font-semibold text-ink-muted">Seed</dt>
        <dd>
          <code className="font-mono break-all">{draw.seed}</code>
        </dd>
      </div>
      <div>
        <dt className="text-sm font-semibold text-ink-muted">Algorithm</dt>
        <dd>
          {draw.algorithm}, version {draw.algorithmVersion}
        </dd>
      </div>
      <div>
        <dt className="text-sm font-semibold text-ink-muted">Drawn</dt>
        <dd>
          {draw.unit === 'school' ? 'Whole schools, in one district-wide block' : 'Classrooms, within each site (one block per site)'}
        </dd>
      </div>
      {draw.committed && draw.committedAt && (
        <div>
          <dt className="text-sm font-semibold text-ink-muted">Committed</dt>
          <dd>
            {formatDateTime(draw.committedAt)} by {draw.committedBy?.name ?? 'someone no longer listed'}
          </dd>
        </div>
      )}
    </dl>
  );
}

function DrawResult({ draw }: { draw: Draw }) {
  return (
    <>
      <DrawFacts draw={draw} />
      <BalanceTable balance={draw.balance} unit={draw.unit} />
      <AssignmentsTable draw={draw} />
    </>
  );
}

/** The coordinator's preview and commit, before any draw is stored. */
function RunTheDraw({ studyId, sealed, classrooms }: { studyId: string; sealed: boolean; classrooms: number }) {
  const [confirming, setConfirming] = useState(false);
  const preview = usePreviewDraw(studyId);
  const commit = useCommitDraw(studyId);
  const seedForm = useForm({ defaultValues: { seed: '' } });
  const { onSubmit: onPreview, problem: previewProblem } = useApiSubmit(seedForm, ['seed'], ({ seed }) => preview.mutateAsync(seed.trim() || undefined));

  if (!sealed) {
    return (
      <EmptyState title="The draw waits for the sealed plan">
        <p>The research lead seals the plan first, so the analysis is fixed before anyone knows which classrooms are in which arm.</p>
      </EmptyState>
    );
  }
  if (classrooms < 2) {
    return (
      <EmptyState title="Add classrooms first">
        <p>A draw needs at least two classrooms. Add them on Sites &amp; classes.</p>
      </EmptyState>
    );
  }

  return (
    <div className="space-y-8">
      <form noValidate aria-label="Preview the draw" className="flex flex-wrap items-end gap-3" onSubmit={onPreview}>
        {previewProblem && (
          <div className="w-full">
            <FormProblemAlert problem={previewProblem} />
          </div>
        )}
        <Field
          label="Seed"
          hint="Leave empty for a random seed. The same seed always gives the same draw."
          error={seedForm.formState.errors.seed?.message}
          className="w-full max-w-md"
        >
          {(control) => <TextInput {...control} autoComplete="off" {...seedForm.register('seed')} />}
        </Field>
        <Button type="submit" variant="secondary" busy={seedForm.formState.isSubmitting}>
          Preview the draw
        </Button>
      </form>
      <div aria-live="polite" className="space-y-6">
        {preview.data && (
          <>
            <Alert tone="info" title="Preview: nothing is stored yet">
              This is what seed <code className="font-mono">{preview.data.seed}</code> gives. Preview again to try another seed, or
              commit this one.
            </Alert>
            <DrawResult draw={preview.data} />
            <Button onClick={() => setConfirming(true)}>Commit this draw…</Button>
          </>
        )}
      </div>
      <Dialog
        open={confirming}
        title="Commit the draw?"
        description="Committing records the seed, the algorithm and every assignment, and sets each classroom’s arm. It is immutable: it can never be changed or drawn again, and classrooms can no longer be added."
        onClose={() => setConfirming(false)}
      >
        {commit.error && (
          <div className="mb-4">
            <Alert tone="error">{commit.error.message}</Alert>
          </div>
        )}
        <div className="flex flex-wrap gap-3">
          <Button
            busy={commit.isPending}
            onClick={async () => {
              if (!preview.data) return;
              try {
                await commit.mutateAsync(preview.data.seed);
                setConfirming(false);
              } catch {
                // The error is shown in the dialog.
              }
            }}
          >
            Commit the draw
          </Button>
          <Button variant="secondary" onClick={() => setConfirming(false)}>
            Not yet
          </Button>
        </div>
      </Dialog>
    </div>
  );
}

export function DrawPage() {
  const study = useCurrentStudy();
  const queryClient = useQueryClient();
  const grants = useSession().data?.roles ?? [];
  const coordinator = hasRole(grants, 'coordinator');
  const draw = useQuery(drawQueryOptions(study.id));
  const classrooms = useQuery(studyClassroomsQueryOptions(study.id));
  const reassign = useReassign(study.id);

  if (draw.isPending) return <Loading label="Loading the draw…" />;
  if (draw.error) return <Alert tone="error">{draw.error.message}</Alert>;
  const committed = draw.data;
  const classroomList = classrooms.data?.items ?? [];

  if (!committed) {
    return (
      <Section
        title="The draw"
        description={`Evenhand assigns ${unitLabels[study.unitOfAssignment].plural} at random to the intervention or the comparison${study.unitOfAssignment === 'classroom' ? ', within each site, so every school has both' : ''}. Preview it first; once committed it can never change.`}
      >
        {coordinator ? (
          <RunTheDraw studyId={study.id} sealed={study.planVersion !== null} classrooms={study.counts.classrooms} />
        ) : (
          <EmptyState title="The draw has not been run yet">
            <p>The coordinator runs it once the plan is sealed and the classrooms are enrolled. Its seed, algorithm and result will be shown here.</p>
          </EmptyState>
        )}
      </Section>
    );
  }

  return (
    <div className="space-y-12">
      <Section
        title="The committed draw"
        description="Recorded once and immutable. Anyone can re-derive it from its seed and check that it is exactly what the seed gives."
      >
        <DrawFacts draw={committed} />
        <VerifyDraw onFetch={() => queryClient.fetchQuery({ ...drawQueryOptions(study.id), staleTime: 0 })} />
        <BalanceTable balance={committed.balance} unit={committed.unit} />
        <AssignmentsTable draw={committed} />
      </Section>

      <Section
        title="Manual reassignments"
        description="Classrooms moved to the other arm by hand after the draw, with the reason. The balance table above shows the arms as they are now."
      >
        <ReassignmentsList reassignments={committed.reassignments} classrooms={classroomList} />
        {coordinator && committed.id && (
          <ReassignForm classrooms={classroomList} onReassign={(input) => reassign.mutateAsync(input)} />
        )}
      </Section>
    </div>
  );
}

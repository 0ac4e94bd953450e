import { arms, reassignmentSchema, type Classroom, type Draw, type Reassignment } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Field, Select, TextArea } from '@/components/ui/field';
import { FigureTable } from '@/components/ui/figure-table';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { formatDateTime } from '@/lib/format';
import { plainMessages } from '@/lib/form-messages';
import { armLabels } from '@/lib/study';
import { useApiSubmit } from '@/lib/use-api-submit';

interface ReassignFormProps {
  classrooms: Classroom[];
  onReassign: (input: Reassignment) => Promise<unknown>;
}

export function ReassignForm({ classrooms, onReassign }: ReassignFormProps) {
  const [done, setDone] = useState<string | null>(null);
  const form = useForm({
    resolver: zodResolver(reassignmentSchema, plainMessages),
    defaultValues: { classroomId: '', arm: 'comparison' as const, reason: '' },
  });
  const {
    register,
    setValue,
    reset,
    watch,
    formState: { errors, isSubmitting },
  } = form;
  const chosen = classrooms.find((c) => c.id === watch('classroomId'));

  const { onSubmit, problem } = useApiSubmit(form, ['classroomId', 'arm', 'reason'], async (input) => {
    setDone(null);
    await onReassign(input);
    const name = classrooms.find((c) => c.id === input.classroomId)?.name ?? 'The classroom';
    reset();
    setDone(`${name} is now in the ${input.arm} arm. The study is marked quasi-experimental.`);
  });

  return (
    <form noValidate onSubmit={onSubmit} aria-label="Reassign a classroom" className="space-y-5">
      <Alert tone="caution" title="This breaks the random assignment">
        Moving a classroom by hand makes the study <strong>quasi-experimental</strong> from then on: its results can no longer
        count as a randomised comparison, and baseline equivalence must be shown. Do it only when the draw cannot be followed,
        and say why. The reason is recorded for reviewers and the audit trail.
      </Alert>
      {problem && <FormProblemAlert problem={problem} />}
      <div className="grid gap-5 sm:grid-cols-2">
        <Field label="Classroom" error={errors.classroomId?.message}>
          {(control) => (
            <Select
              {...control}
              {...register('classroomId', {
                onChange: (e: { target: { value: string } }) => {
                  const c = classrooms.find((x) => x.id === e.target.value);
                  if (c?.arm) setValue('arm', c.arm === 'intervention' ? 'comparison' : 'intervention');
                },
              })}
            >
              <option value="">Choose a classroom</option>
              {classrooms.map((c) => (
                <option key={c.id} value={c.id}>
                  {c.name}, {c.siteName} — now {c.arm ? armLabels[c.arm].toLowerCase() : 'not drawn'}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="Move it to" hint={chosen?.arm ? `It is in the ${chosen.arm} arm now.` : undefined} error={errors.arm?.message}>
          {(control) => (
            <Select {...control} {...register('arm')}>
              {arms.map((a) => (
                <option key={a} value={a}>
                  {armLabels[a]}
                </option>
              ))}
            </Select>
          )}
        </Field>
      </div>
      <Field label="Reason" hint="At least a sentence: what happened that the draw cannot be followed." error={errors.reason?.message}>
        {(control) => <TextArea {...control} rows={3} {...register('reason')} />}
      </Field>
      <div className="flex flex-wrap items-center gap-3">
        <Button type="submit" variant="danger" busy={isSubmitting}>
          Reassign the classroom
        </Button>
        <p aria-live="polite" className="text-sm">
          {done}
        </p>
      </div>
    </form>
  );
}

export function ReassignmentsList({ reassignments, classrooms }: { reassignments: Draw['reassignments']; classrooms: Classroom[] }) {
  if (reassignments.length === 0) return <p className="text-ink-muted">No classroom has been moved by hand: the study follows the random draw.</p>;
  const names = new Map(classrooms.map((c) => [c.id, `${c.name}, ${c.siteName}`]));
  return (
    <FigureTable
      caption="Reassignments"
      hideCaption
      columns={[
        { key: 'at', header: 'When' },
        { key: 'classroom', header: 'Classroom' },
        { key: 'move', header: 'Moved' },
        { key: 'reason', header: 'Reason' },
        { key: 'by', header: 'By' },
      ]}
      rows={reassignments.map((r) => ({
        id: r.id,
        at: formatDateTime(r.at),
        classroom: names.get(r.classroomId) ?? 'A classroom',
        move: `${armLabels[r.fromArm]} → ${armLabels[r.arm]}`,
        reason: r.reason,
        by: r.by.name,
      }))}
    />
  );
}

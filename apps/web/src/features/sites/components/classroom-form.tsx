import { createClassroomSchema, createCohortSchema, type Classroom, type Cohort, type CreateClassroom, type StudySite, type UpdateClassroom } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm, type FieldErrors, type UseFormRegister } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, Select, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { plainMessages } from '@/lib/form-messages';
import { useApiSubmit } from '@/lib/use-api-submit';

const classroomFields = ['siteId', 'cohortId', 'name', 'grade', 'expectedSize', 'teacher'];
// An edit sends only what changed, but every field on screen is checked as the API checks a new classroom.
const editSchema = createClassroomSchema.omit({ siteId: true });

function ClassroomFields({
  register,
  errors,
  sites,
  cohorts,
  withSite,
}: {
  register: UseFormRegister<CreateClassroom>;
  errors: FieldErrors<CreateClassroom>;
  sites: StudySite[];
  cohorts: Cohort[];
  withSite: boolean;
}) {
  return (
    <>
      <div className="grid gap-5 sm:grid-cols-2">
        {withSite && (
          <Field label="Site" error={errors.siteId?.message}>
            {(control) => (
              <Select {...control} {...register('siteId')}>
                <option value="">Choose a site</option>
                {sites.map((s) => (
                  <option key={s.id} value={s.id}>
                    {s.name}
                  </option>
                ))}
              </Select>
            )}
          </Field>
        )}
        <Field label="Cohort" hint={cohorts.length === 0 ? 'Add a cohort first.' : undefined} error={errors.cohortId?.message}>
          {(control) => (
            <Select {...control} {...register('cohortId')} disabled={cohorts.length === 0}>
              <option value="">Choose a cohort</option>
              {cohorts.map((c) => (
                <option key={c.id} value={c.id}>
                  {c.name}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="Classroom name" hint="As the school calls it, e.g. 4B or Room 12." error={errors.name?.message}>
          {(control) => <TextInput {...control} autoComplete="off" {...register('name')} />}
        </Field>
        <Field label="Grade" error={errors.grade?.message}>
          {(control) => <TextInput {...control} autoComplete="off" {...register('grade')} />}
        </Field>
        <Field label="Expected size" hint="Students expected in the class." error={errors.expectedSize?.message}>
          {(control) => <TextInput {...control} type="number" inputMode="numeric" min={1} {...register('expectedSize', { valueAsNumber: true })} />}
        </Field>
      </div>
      <fieldset className="space-y-4">
        <legend className="font-semibold">Teacher</legend>
        <p className="text-sm text-ink-muted">A teacher new to Evenhand receives an e-mail invitation to choose a password, then sees only their own classrooms.</p>
        <div className="grid gap-5 sm:grid-cols-2">
          <Field label="Teacher’s name" error={errors.teacher?.name?.message}>
            {(control) => <TextInput {...control} autoComplete="off" {...register('teacher.name')} />}
          </Field>
          <Field label="Teacher’s e-mail address" error={errors.teacher?.email?.message}>
            {(control) => <TextInput {...control} type="email" autoComplete="off" {...register('teacher.email')} />}
          </Field>
        </div>
      </fieldset>
    </>
  );
}

interface AddClassroomFormProps {
  sites: StudySite[];
  cohorts: Cohort[];
  onAdd: (input: CreateClassroom) => Promise<unknown>;
  onCancel: () => void;
}

export function AddClassroomForm({ sites, cohorts, onAdd, onCancel }: AddClassroomFormProps) {
  const form = useForm<CreateClassroom>({
    resolver: zodResolver(createClassroomSchema, plainMessages),
    defaultValues: {
      siteId: sites.length === 1 ? sites[0].id : '',
      cohortId: cohorts.length === 1 ? cohorts[0].id : '',
      name: '',
      grade: '',
      teacher: { email: '', name: '' },
    },
  });
  const {
    register,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, classroomFields, async (input) => {
    await onAdd(input);
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <ClassroomFields register={register} errors={errors} sites={sites} cohorts={cohorts} withSite />
      <div className="flex flex-wrap gap-3 pt-2">
        <Button type="submit" busy={isSubmitting}>
          Add the classroom
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

interface EditClassroomFormProps {
  classroom: Classroom;
  cohorts: Cohort[];
  onSave: (changes: UpdateClassroom) => Promise<unknown>;
  onCancel: () => void;
}

export function EditClassroomForm({ classroom, cohorts, onSave, onCancel }: EditClassroomFormProps) {
  const initial = {
    cohortId: classroom.cohortId,
    name: classroom.name,
    grade: classroom.grade,
    expectedSize: classroom.expectedSize,
    teacher: { email: classroom.teacher.email, name: classroom.teacher.name },
  };
  const form = useForm({ resolver: zodResolver(editSchema, plainMessages), defaultValues: initial });
  const {
    register,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, classroomFields, async (values) => {
    const changes: UpdateClassroom = {};
    if (values.cohortId !== initial.cohortId) changes.cohortId = values.cohortId;
    if (values.name !== initial.name) changes.name = values.name;
    if (values.grade !== initial.grade) changes.grade = values.grade;
    if (values.expectedSize !== initial.expectedSize) changes.expectedSize = values.expectedSize;
    if (values.teacher.email !== initial.teacher.email || values.teacher.name !== initial.teacher.name) changes.teacher = values.teacher;
    if (Object.keys(changes).length === 0) {
      onCancel();
      return;
    }
    await onSave(changes);
  });

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <p className="text-ink-muted">At {classroom.siteName}. A classroom stays at its site; add a new classroom for another school.</p>
      <ClassroomFields
        // The same fields without the site: a classroom never moves to another school.
        register={register as unknown as UseFormRegister<CreateClassroom>}
        errors={errors}
        sites={[]}
        cohorts={cohorts}
        withSite={false}
      />
      <div className="flex flex-wrap gap-3 pt-2">
        <Button type="submit" busy={isSubmitting}>
          Save the changes
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

export function AddCohortForm({ onAdd }: { onAdd: (name: string) => Promise<unknown> }) {
  const [added, setAdded] = useState<string | null>(null);
  const form = useForm({ resolver: zodResolver(createCohortSchema, plainMessages), defaultValues: { name: '' } });
  const {
    register,
    reset,
    formState: { errors, isSubmitting },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['name'], async ({ name }) => {
    setAdded(null);
    await onAdd(name);
    reset();
    setAdded(`Cohort ${name} is added.`);
  });

  return (
    <form noValidate onSubmit={onSubmit} aria-label="Add a cohort" className="space-y-3">
      {problem && <FormProblemAlert problem={problem} />}
      <div className="flex flex-wrap items-end gap-3">
        <Field label="New cohort" hint="Classrooms followed together, e.g. Grade 4, 2026–27." error={errors.name?.message} className="w-full max-w-sm">
          {(control) => <TextInput {...control} autoComplete="off" {...register('name')} />}
        </Field>
        <Button type="submit" variant="secondary" busy={isSubmitting}>
          Add the cohort
        </Button>
      </div>
      <p aria-live="polite" className="text-sm text-ink-muted">
        {added}
      </p>
    </form>
  );
}

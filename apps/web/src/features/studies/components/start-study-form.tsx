import { createStudySchema, unitsOfAssignment, type CreateStudy } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, Select, TextArea, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { unitLabels } from '@/lib/study';
import { useApiSubmit } from '@/lib/use-api-submit';

interface StartStudyFormProps {
  onStart: (input: CreateStudy) => Promise<unknown>;
  onCancel: () => void;
}

const unitHints: Record<(typeof unitsOfAssignment)[number], string> = {
  classroom: 'Whole classrooms are drawn into the intervention or the comparison, within each school (the usual choice).',
  school: 'Whole schools are drawn, and every classroom follows its school.',
  student: 'Students are drawn one by one; this needs class rosters, which Evenhand does not hold.',
};

export function StartStudyForm({ onStart, onCancel }: StartStudyFormProps) {
  const form = useForm({
    resolver: zodResolver(createStudySchema),
    defaultValues: { title: '', intervention: '', comparisonCondition: '', unitOfAssignment: 'classroom' as const },
  });
  const {
    register,
    watch,
    formState: { errors, isSubmitting },
  } = form;
  const unit = watch('unitOfAssignment');
  const { onSubmit, problem } = useApiSubmit(form, Object.keys(createStudySchema.shape), onStart);

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <Field label="Title" hint="What is tried, where and when, e.g. “Paired reading in grade 4, 2026–27”." error={errors.title?.message}>
        {(control) => <TextInput {...control} autoComplete="off" {...register('title')} />}
      </Field>
      <Field label="The intervention" hint="What classrooms in the intervention arm do differently." error={errors.intervention?.message}>
        {(control) => <TextArea {...control} rows={3} {...register('intervention')} />}
      </Field>
      <Field
        label="The comparison condition"
        hint="What the other classrooms do meanwhile, usually business as usual."
        error={errors.comparisonCondition?.message}
      >
        {(control) => <TextArea {...control} rows={3} {...register('comparisonCondition')} />}
      </Field>
      <Field label="Unit of assignment" hint={unit ? unitHints[unit] : undefined} error={errors.unitOfAssignment?.message}>
        {(control) => (
          <Select {...control} {...register('unitOfAssignment')}>
            {unitsOfAssignment.map((u) => (
              <option key={u} value={u}>
                {unitLabels[u].plural[0].toUpperCase() + unitLabels[u].plural.slice(1)}
              </option>
            ))}
          </Select>
        )}
      </Field>
      <div className="flex flex-wrap gap-3 pt-2">
        <Button type="submit" busy={isSubmitting}>
          Start the study
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

import { enrolSiteSchema, type EnrolSite, type Site } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm, type Resolver } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { ChoiceGroup } from '@/components/ui/choice-group';
import { Field, Select, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { plainMessages } from '@/lib/form-messages';
import { useApiSubmit } from '@/lib/use-api-submit';

interface Values {
  source: 'existing' | 'new';
  siteId: string;
  name: string;
  code: string;
  principal: { email: string; name: string };
}

const [existingSchema, newSchema] = enrolSiteSchema.options;
const existingResolver = zodResolver(existingSchema, plainMessages);
const newResolver = zodResolver(newSchema, plainMessages);

/**
 * Checks the values against the branch of enrolSiteSchema the person chose; a principal left
 * entirely blank is left out, since naming one is optional.
 */
const resolver: Resolver<Values, unknown, EnrolSite> = (values, context, options) => {
  const principal = values.principal.email.trim() || values.principal.name.trim() ? values.principal : undefined;
  const shaped = values.source === 'existing' ? { siteId: values.siteId, principal } : { name: values.name, code: values.code, principal };
  return (values.source === 'existing' ? existingResolver : newResolver)(shaped as never, context, options as never) as never;
};

interface EnrolSiteFormProps {
  /** District schools not yet in this study. */
  available: Site[];
  onEnrol: (input: EnrolSite) => Promise<unknown>;
  onCancel: () => void;
}

export function EnrolSiteForm({ available, onEnrol, onCancel }: EnrolSiteFormProps) {
  const form = useForm<Values, unknown, EnrolSite>({
    resolver,
    defaultValues: { source: available.length > 0 ? 'existing' : 'new', siteId: '', name: '', code: '', principal: { email: '', name: '' } },
  });
  const {
    register,
    watch,
    formState: { errors, isSubmitting },
  } = form;
  const source = watch('source');
  const siteId = watch('siteId');
  const chosen = available.find((s) => s.id === siteId);

  const { onSubmit, problem } = useApiSubmit(form, ['siteId', 'name', 'code', 'principal'], onEnrol);

  return (
    <form noValidate onSubmit={onSubmit} className="space-y-5">
      {problem && <FormProblemAlert problem={problem} />}
      <ChoiceGroup
        legend="Which school?"
        input={register('source')}
        choices={[
          { value: 'existing', label: 'A school the district already has in Evenhand', hint: available.length === 0 ? 'Every one of them is enrolled already.' : undefined },
          { value: 'new', label: 'A new school' },
        ]}
      />
      {source === 'existing' ? (
        <Field label="School" error={errors.siteId?.message}>
          {(control) => (
            <Select {...control} {...register('siteId')} disabled={available.length === 0}>
              <option value="">Choose a school</option>
              {available.map((s) => (
                <option key={s.id} value={s.id}>
                  {s.name} ({s.code})
                </option>
              ))}
            </Select>
          )}
        </Field>
      ) : (
        <div className="grid gap-5 sm:grid-cols-[2fr_1fr]">
          <Field label="School name" error={errors.name?.message}>
            {(control) => <TextInput {...control} autoComplete="off" {...register('name')} />}
          </Field>
          <Field label="Site code" hint="2–20 letters, digits or dashes; used in CSV files." error={errors.code?.message}>
            {(control) => <TextInput {...control} autoComplete="off" className="uppercase" {...register('code')} />}
          </Field>
        </div>
      )}
      <fieldset className="space-y-4">
        <legend className="font-semibold">Principal (optional)</legend>
        <p className="text-sm text-ink-muted">
          {chosen?.principal
            ? `${chosen.principal.name} is this school’s principal now. Fill in only to name someone else.`
            : 'A new principal receives an e-mail invitation to choose a password; they then get the school’s digests.'}
        </p>
        <div className="grid gap-5 sm:grid-cols-2">
          <Field label="Principal’s name" error={errors.principal?.name?.message}>
            {(control) => <TextInput {...control} autoComplete="off" {...register('principal.name')} />}
          </Field>
          <Field label="Principal’s e-mail address" error={errors.principal?.email?.message}>
            {(control) => <TextInput {...control} type="email" autoComplete="off" {...register('principal.email')} />}
          </Field>
        </div>
      </fieldset>
      <div className="flex flex-wrap gap-3 pt-2">
        <Button type="submit" busy={isSubmitting}>
          Enrol the school
        </Button>
        <Button variant="secondary" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

import { inviteAccountSchema, type InviteAccount, type Site } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { FormProvider, useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { GrantsFieldset } from '@/features/accounts/components/grants-fieldset';
import { useApiSubmit } from '@/lib/use-api-submit';

interface InviteFormProps {
  sites: Site[];
  onInvite: (input: InviteAccount) => Promise<unknown>;
  onCancel: () => void;
}

export function InviteForm({ sites, onInvite, onCancel }: InviteFormProps) {
  const form = useForm({
    resolver: zodResolver(inviteAccountSchema),
    defaultValues: { email: '', name: '', roles: [{ role: 'teacher' as const, siteId: null }] },
  });
  const {
    register,
    formState: { errors, isSubmitting },
  } = form;
  const { onSubmit, problem } = useApiSubmit(form, ['email', 'name', 'roles'], onInvite);

  return (
    <FormProvider {...form}>
      <form noValidate onSubmit={onSubmit} className="space-y-5">
        {problem && <FormProblemAlert problem={problem} />}
        <Field label="Name" hint="As colleagues know them, e.g. Dana Whitfield." error={errors.name?.message}>
          {(control) => <TextInput {...control} autoComplete="off" {...register('name')} />}
        </Field>
        <Field label="E-mail address" hint="The invitation goes here; it is also how they sign in." error={errors.email?.message}>
          {(control) => <TextInput {...control} type="email" autoComplete="off" {...register('email')} />}
        </Field>
        <GrantsFieldset sites={sites} />
        <div className="flex flex-wrap gap-3 pt-2">
          <Button type="submit" busy={isSubmitting}>
            Send invitation
          </Button>
          <Button variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
        </div>
      </form>
    </FormProvider>
  );
}

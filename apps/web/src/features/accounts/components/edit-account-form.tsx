import { updateAccountSchema, type Site, type UpdateAccount, type Account } from '@evenhand/entities';
import { zodResolver } from '@hookform/resolvers/zod';
import { FormProvider, useForm } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, TextInput } from '@/components/ui/field';
import { FormProblemAlert } from '@/components/ui/form-problem-alert';
import { GrantsFieldset } from '@/features/accounts/components/grants-fieldset';
import { useApiSubmit } from '@/lib/use-api-submit';

interface EditAccountFormProps {
  account: Account;
  sites: Site[];
  onSave: (changes: UpdateAccount) => Promise<unknown>;
  onCancel: () => void;
}

export function EditAccountForm({ account, sites, onSave, onCancel }: EditAccountFormProps) {
  const form = useForm({
    resolver: zodResolver(updateAccountSchema),
    defaultValues: { name: account.name, roles: account.roles },
  });
  const {
    register,
    formState: { errors, isSubmitting, isDirty },
  } = form;

  const { onSubmit, problem } = useApiSubmit(form, ['name', 'roles'], async (changes) => {
    if (!isDirty) return onCancel();
    await onSave(changes);
  });

  return (
    <FormProvider {...form}>
      <form noValidate onSubmit={onSubmit} className="space-y-5">
        {problem && <FormProblemAlert problem={problem} />}
        <p>
          <span className="font-semibold">E-mail address:</span> {account.email}
        </p>
        <Field label="Name" error={errors.name?.message}>
          {(control) => <TextInput {...control} autoComplete="off" {...register('name')} />}
        </Field>
        <GrantsFieldset sites={sites} />
        <div className="flex flex-wrap gap-3 pt-2">
          <Button type="submit" busy={isSubmitting}>
            Save changes
          </Button>
          <Button variant="secondary" onClick={onCancel}>
            Cancel
          </Button>
        </div>
      </form>
    </FormProvider>
  );
}

import { roleLabels, roles, siteScopedRoles, type Role, type Site } from '@evenhand/entities';
import { useFieldArray, useFormContext, useWatch } from 'react-hook-form';
import { Button } from '@/components/ui/button';
import { Field, Select } from '@/components/ui/field';

interface GrantsValues {
  roles: { role: Role; siteId?: string | null }[];
}

/** The role grants of an account; teacher and principal grants also name their school. */
export function GrantsFieldset({ sites }: { sites: Site[] }) {
  const {
    control,
    register,
    setValue,
    formState: { errors },
  } = useFormContext<GrantsValues>();
  const { fields, append, remove } = useFieldArray({ control, name: 'roles' });
  const grants = useWatch({ control, name: 'roles' });
  const listError = errors.roles?.message ?? errors.roles?.root?.message;
  const numbered = fields.length > 1;

  return (
    <fieldset className="space-y-3">
      <legend className="font-semibold">Roles</legend>
      <p className="-mt-2 text-sm text-ink-muted">What this person may do. A teacher or principal role belongs to one school.</p>
      {fields.map((field, i) => {
        const siteScoped = siteScopedRoles.includes(grants?.[i]?.role ?? field.role);
        const rowErrors = errors.roles?.[i];
        return (
          <div key={field.id} className="grid gap-3 rounded-md border border-line bg-surface p-3 sm:grid-cols-[1fr_1.4fr_auto] sm:items-start">
            <Field label={numbered ? `Role ${i + 1}` : 'Role'} error={rowErrors?.role?.message}>
              {(controlProps) => (
                <Select
                  {...controlProps}
                  {...register(`roles.${i}.role`, {
                    onChange: (e: { target: { value: Role } }) => {
                      if (!siteScopedRoles.includes(e.target.value)) setValue(`roles.${i}.siteId`, null);
                    },
                  })}
                >
                  {roles.map((role) => (
                    <option key={role} value={role}>
                      {roleLabels[role]}
                    </option>
                  ))}
                </Select>
              )}
            </Field>
            {siteScoped ? (
              <Field label={numbered ? `School for role ${i + 1}` : 'School'} error={rowErrors?.siteId?.message}>
                {(controlProps) => (
                  <Select {...controlProps} {...register(`roles.${i}.siteId`, { setValueAs: (v: string | null) => v || null })}>
                    <option value="">Choose a school</option>
                    {sites.map((site) => (
                      <option key={site.id} value={site.id}>
                        {site.name} ({site.code})
                      </option>
                    ))}
                  </Select>
                )}
              </Field>
            ) : (
              <p className="self-center text-sm text-ink-muted sm:pt-7">Applies across the district.</p>
            )}
            {numbered && (
              <Button variant="quiet" size="sm" className="sm:mt-8" onClick={() => remove(i)}>
                Remove<span className="sr-only"> role {i + 1}</span>
              </Button>
            )}
          </div>
        );
      })}
      {listError && <p className="text-sm font-semibold text-danger">{listError}</p>}
      <Button variant="secondary" size="sm" onClick={() => append({ role: 'teacher', siteId: null })}>
        Add another role
      </Button>
    </fieldset>
  );
}

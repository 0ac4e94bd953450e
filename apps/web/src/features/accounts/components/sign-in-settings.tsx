import { useQuery } from '@tanstack/react-query';
import { useId } from 'react';
import { Alert } from '@/components/ui/alert';
import { Section } from '@/components/ui/section';
import { signInSettingsQueryOptions, useUpdateSignInSettings } from '@/features/accounts/api';
import { formatDateTime } from '@/lib/format';

/** The admin's switch for password sign-in; turning it off needs the district's identity provider. */
export function SignInSettings() {
  const settings = useQuery(signInSettingsQueryOptions());
  const update = useUpdateSignInSettings();
  const switchId = useId();
  const data = settings.data;
  // While a change is saved, the switch already shows it.
  const passwordsForEveryone = update.isPending ? update.variables === 'everyone' : data?.passwordSignIn === 'everyone';
  // Off needs the provider; on is always allowed, so a district that loses its provider can turn passwords back on.
  const locked = !data || update.isPending || (passwordsForEveryone && !data.districtSignIn);

  return (
    <Section
      title="Sign-in"
      description={
        data?.districtSignIn
          ? 'People can sign in with their district account; Evenhand matches the address the district has verified to an invited account.'
          : 'This server has no district identity provider, so everyone signs in with an Evenhand password.'
      }
    >
      {settings.error && <Alert tone="error">{settings.error.message}</Alert>}
      {data && (
        <div className="space-y-3 rounded-lg border border-line bg-surface p-4">
          <div className="flex items-start gap-3">
            <input
              id={switchId}
              type="checkbox"
              role="switch"
              aria-describedby={`${switchId}-hint`}
              checked={passwordsForEveryone}
              disabled={locked}
              onChange={(event) => update.mutate(event.target.checked ? 'everyone' : 'admin_only')}
              className="mt-1 size-4 shrink-0 accent-[var(--color-accent)]"
            />
            <div>
              <label htmlFor={switchId} className="font-semibold">
                Password sign-in for everyone
              </label>
              <p id={`${switchId}-hint`} className="text-sm text-ink-muted">
                {passwordsForEveryone
                  ? data.districtSignIn
                    ? 'Turn off to make everyone but the district admin sign in with their district account.'
                    : 'Passwords can be turned off once the district identity provider is set up (see the README).'
                  : 'Off: only the district admin signs in with a password; everyone else uses their district account.'}
                {data.updatedBy && data.updatedAt && ` Last changed by ${data.updatedBy}, ${formatDateTime(data.updatedAt)}.`}
              </p>
            </div>
          </div>
          {update.error && <Alert tone="error">{update.error.message}</Alert>}
        </div>
      )}
    </Section>
  );
}

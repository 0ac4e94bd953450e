import { roleLabels, type SignInOptions } from '@evenhand/entities';

/** The seeded demo accounts, which the API lists only outside production; picking one fills in the form. */
export function DemoAccounts({
  demo,
  districtSignIn,
  onPick,
}: {
  demo: NonNullable<SignInOptions['demo']>;
  /** Whether the page offers the district account, which here leads to the local test provider. */
  districtSignIn: boolean;
  onPick: (email: string, password: string) => void;
}) {
  return (
    <aside aria-labelledby="demo-accounts-title" className="rounded-lg border border-dashed border-line-strong bg-sunken p-5 text-sm">
      <h2 id="demo-accounts-title" className="text-base font-semibold">
        Demo accounts
      </h2>
      <p className="mt-1 text-ink-muted">
        This server holds the invented demo district; a production server never lists these. Every account's password is{' '}
        <code className="font-mono text-ink">{demo.password}</code>. Pick one to fill in the form.
      </p>
      {districtSignIn && (
        <p className="mt-2 text-ink-muted">
          <strong className="text-ink">Sign in with your district account</strong> leads to a local test provider that lists the
          same people, without passwords, plus one address it has not verified and one nobody invited.
        </p>
      )}
      <ul className="mt-3 space-y-1">
        {demo.accounts.map((account) => (
          <li key={account.email}>
            <button
              type="button"
              onClick={() => onPick(account.email, demo.password)}
              className="w-full rounded px-2 py-1 text-left hover:bg-surface"
            >
              <span className="font-semibold">{roleLabels[account.role]}</span>
              {account.siteName && <span className="text-ink-muted"> · {account.siteName}</span>}
              <span className="block text-ink-muted">
                {account.name} · {account.email}
              </span>
            </button>
          </li>
        ))}
      </ul>
    </aside>
  );
}

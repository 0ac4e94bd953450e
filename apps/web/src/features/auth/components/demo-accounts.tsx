import { roleLabels, type Role } from '@evenhand/entities';

/** The accounts the demo seed creates; they all share one password. */
const DEMO_PASSWORD = 'evenhand-demo';
const demoAccounts: { email: string; role: Role; note?: string }[] = [
  { email: 'admin@evenhand.test', role: 'admin' },
  { email: 'coordinator@evenhand.test', role: 'coordinator' },
  { email: 'lead@evenhand.test', role: 'research_lead' },
  { email: 'teacher1@evenhand.test', role: 'teacher', note: 'Alder Street' },
  { email: 'teacher2@evenhand.test', role: 'teacher', note: 'Alder Street' },
  { email: 'teacher3@evenhand.test', role: 'teacher', note: 'Brookfield' },
  { email: 'teacher4@evenhand.test', role: 'teacher', note: 'Brookfield' },
  { email: 'principal1@evenhand.test', role: 'principal', note: 'Alder Street' },
  { email: 'principal2@evenhand.test', role: 'principal', note: 'Brookfield' },
  { email: 'reviewer@evenhand.test', role: 'reviewer' },
];

export function DemoAccounts({ onPick }: { onPick: (email: string, password: string) => void }) {
  return (
    <aside aria-labelledby="demo-accounts-title" className="rounded-lg border border-dashed border-line-strong bg-sunken p-5 text-sm">
      <h2 id="demo-accounts-title" className="text-base font-semibold">
        Demo accounts
      </h2>
      <p className="mt-1 text-ink-muted">
        Shown in demo builds only. Every account's password is <code className="font-mono text-ink">{DEMO_PASSWORD}</code>. Pick one
        to fill in the form.
      </p>
      <ul className="mt-3 space-y-1">
        {demoAccounts.map((account) => (
          <li key={account.email}>
            <button
              type="button"
              onClick={() => onPick(account.email, DEMO_PASSWORD)}
              className="w-full rounded px-2 py-1 text-left hover:bg-surface"
            >
              <span className="font-semibold">{roleLabels[account.role]}</span>
              {account.note && <span className="text-ink-muted"> · {account.note}</span>}
              <span className="block text-ink-muted">{account.email}</span>
            </button>
          </li>
        ))}
      </ul>
    </aside>
  );
}

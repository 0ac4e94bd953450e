import type { Account } from '@evenhand/entities';
import { useState } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';

interface AccountAccessProps {
  account: Account;
  onSetActive: (active: boolean) => Promise<unknown>;
}

/** Deactivation is reversible and keeps everything the person did; it only stops them signing in. */
export function AccountAccess({ account, onSetActive }: AccountAccessProps) {
  const [busy, setBusy] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);

  const change = async () => {
    setBusy(true);
    setProblem(null);
    try {
      await onSetActive(!account.active);
    } catch (error) {
      setProblem(error instanceof Error ? error.message : 'The change could not be saved.');
      setBusy(false);
    }
  };

  return (
    <section aria-labelledby="account-access-title" className="mt-8 space-y-3 border-t border-line pt-6">
      <h3 id="account-access-title" className="text-lg font-semibold">
        Signing in
      </h3>
      {problem && <Alert tone="error">{problem}</Alert>}
      <p className="text-ink-muted">
        {account.active
          ? `Deactivating stops ${account.name} from signing in. Their records and the audit trail stay, and you can reactivate the account at any time.`
          : `${account.name}'s account is deactivated: they cannot sign in. Reactivating lets them sign in again with the same roles.`}
      </p>
      <Button variant={account.active ? 'danger' : 'secondary'} busy={busy} onClick={change}>
        {account.active ? 'Deactivate account' : 'Reactivate account'}
      </Button>
    </section>
  );
}

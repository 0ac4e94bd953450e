import type { User } from '@evenhand/entities';
import { useState } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';

interface AccountAccessProps {
  user: User;
  onSetActive: (active: boolean) => Promise<unknown>;
}

/** Deactivation is reversible and keeps everything the person did; it only stops them signing in. */
export function AccountAccess({ user, onSetActive }: AccountAccessProps) {
  const [busy, setBusy] = useState(false);
  const [problem, setProblem] = useState<string | null>(null);

  const change = async () => {
    setBusy(true);
    setProblem(null);
    try {
      await onSetActive(!user.active);
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
        {user.active
          ? `Deactivating stops ${user.name} from signing in. Their records and the audit trail stay, and you can reactivate the account at any time.`
          : `${user.name}'s account is deactivated: they cannot sign in. Reactivating lets them sign in again with the same roles.`}
      </p>
      <Button variant={user.active ? 'danger' : 'secondary'} busy={busy} onClick={change}>
        {user.active ? 'Deactivate account' : 'Reactivate account'}
      </Button>
    </section>
  );
}

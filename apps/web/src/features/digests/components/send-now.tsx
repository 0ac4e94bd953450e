import type { SendDigestsResult } from '@evenhand/entities';
import { useState } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';

interface SendNowProps {
  schools: number;
  onSend: () => Promise<SendDigestsResult>;
}

function resultWords(r: SendDigestsResult): string {
  const queued = r.queued === 1 ? '1 digest is' : `${r.queued} digests are`;
  const skipped = r.skipped ? ` ${r.skipped === 1 ? '1 principal' : `${r.skipped} principals`} chose not to get digests and ${r.skipped === 1 ? 'was' : 'were'} skipped.` : '';
  return `${queued} in the outbox; the list below shows when each is sent.${skipped}`;
}

/** "Send now", behind a confirmation: every principal of the study gets a digest about their own school. */
export function SendNow({ schools, onSend }: SendNowProps) {
  const [confirming, setConfirming] = useState(false);
  const [busy, setBusy] = useState(false);
  const [result, setResult] = useState<SendDigestsResult | null>(null);
  const [error, setError] = useState<string | null>(null);

  async function send() {
    setBusy(true);
    setError(null);
    try {
      setResult(await onSend());
      setConfirming(false);
    } catch (e) {
      setError((e as Error).message);
    } finally {
      setBusy(false);
    }
  }

  return (
    <div className="space-y-3">
      <Button
        onClick={() => {
          setResult(null);
          setConfirming(true);
        }}
      >
        Send now
      </Button>
      <div aria-live="polite">{result && <Alert tone="success">{resultWords(result)}</Alert>}</div>
      <Dialog
        open={confirming}
        title="Send a digest now?"
        description={`Every principal of the ${schools === 1 ? 'school' : `${schools} schools`} in this study gets an e-mail about their own school, with the same facts as My school. Principals who chose not to get digests are skipped.`}
        onClose={() => setConfirming(false)}
      >
        {error && (
          <div className="mb-4">
            <Alert tone="error">{error}</Alert>
          </div>
        )}
        <div className="flex flex-wrap gap-3">
          <Button busy={busy} onClick={send}>
            Send the digests
          </Button>
          <Button variant="secondary" onClick={() => setConfirming(false)}>
            Cancel
          </Button>
        </div>
      </Dialog>
    </div>
  );
}

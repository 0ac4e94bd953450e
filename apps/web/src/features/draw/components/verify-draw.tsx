import type { Draw } from '@evenhand/entities';
import { useState } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { rederiveInBrowser, type Rederivation } from '@/features/draw/rederive';

interface Outcome {
  server: boolean;
  browser: Rederivation;
}

function browserMessage(r: Rederivation): string {
  if (!r.comparable) return `Your browser could not compare it: ${r.reason}`;
  if (r.identical) return `Re-derived in your browser from the seed: identical, all ${r.units} units in the same arm.`;
  return `Re-derived in your browser from the seed: ${r.differing.length} of ${r.units} units differ (${r.differing.slice(0, 5).join(', ')}${r.differing.length > 5 ? '…' : ''}).`;
}

/** Asks the server to re-derive the draw from its seed, and does the same in the browser, independently. */
export function VerifyDraw({ onFetch }: { onFetch: () => Promise<Draw | null> }) {
  const [outcome, setOutcome] = useState<Outcome | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const verify = async () => {
    setBusy(true);
    setProblem(null);
    setOutcome(null);
    try {
      const draw = await onFetch();
      if (!draw) setProblem('There is no committed draw to verify.');
      else setOutcome({ server: draw.verified, browser: rederiveInBrowser(draw) });
    } catch (error) {
      setProblem(error instanceof Error ? error.message : 'The draw could not be fetched.');
    } finally {
      setBusy(false);
    }
  };

  const allGood = outcome?.server && outcome.browser.comparable && outcome.browser.identical;
  return (
    <div className="space-y-3">
      <Button variant="secondary" onClick={verify} busy={busy}>
        Verify the draw
      </Button>
      <div aria-live="polite">
        {problem && <Alert tone="error">{problem}</Alert>}
        {outcome && (
          <Alert tone={allGood ? 'success' : 'error'} title={allGood ? 'The draw is what its seed gives' : 'The draw does not match its seed'}>
            <ul className="list-disc pl-5">
              <li>
                {outcome.server
                  ? 'Re-derived from the seed by Evenhand’s server: identical.'
                  : 'Re-derived from the seed by Evenhand’s server: it differs from the recorded assignment.'}
              </li>
              <li>{browserMessage(outcome.browser)}</li>
            </ul>
          </Alert>
        )}
      </div>
    </div>
  );
}

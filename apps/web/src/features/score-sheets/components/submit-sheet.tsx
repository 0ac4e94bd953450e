import type { ScoreSheet } from '@evenhand/entities';
import { useState, type ReactNode } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { useMoveSheet } from '@/features/score-sheets/api';

interface SubmitSheetProps {
  sheet: ScoreSheet;
  /** Gets the sheet ready (saves what is waiting); answers why it cannot be submitted, or null. */
  prepare: () => Promise<string | null>;
  /** What is being sent, for the confirmation. */
  summary: ReactNode;
}

/** Submit, after a confirmation that says what goes to the coordinator and what it means. */
export function SubmitSheet({ sheet, prepare, summary }: SubmitSheetProps) {
  const move = useMoveSheet(sheet.id);
  const [problem, setProblem] = useState<string | null>(null);
  const [preparing, setPreparing] = useState(false);
  const [confirming, setConfirming] = useState(false);

  async function onClick() {
    setProblem(null);
    move.reset();
    setPreparing(true);
    try {
      const why = await prepare();
      if (why) setProblem(why);
      else setConfirming(true);
    } finally {
      setPreparing(false);
    }
  }

  return (
    <>
      <Button onClick={() => void onClick()} busy={preparing || move.isPending}>
        {sheet.state === 'returned' ? 'Submit again' : 'Submit to the coordinator'}
      </Button>
      {problem && (
        <div className="basis-full">
          <Alert tone="error">{problem}</Alert>
        </div>
      )}
      <Dialog
        open={confirming}
        title="Submit this score sheet?"
        description={
          <>
            <p>
              {summary} for {sheet.classroomName}, {sheet.waveName}, {sheet.measureName}.
            </p>
            <p className="mt-2">After submitting you cannot change the sheet unless the coordinator returns it to you.</p>
          </>
        }
        onClose={() => setConfirming(false)}
      >
        {move.error && (
          <div className="mb-4">
            <Alert tone="error">{move.error.message}</Alert>
          </div>
        )}
        <div className="flex flex-wrap gap-3">
          <Button
            busy={move.isPending}
            onClick={async () => {
              try {
                await move.mutateAsync({ step: 'submit' });
                setConfirming(false);
              } catch {
                // The dialog shows the error.
              }
            }}
          >
            Submit to the coordinator
          </Button>
          <Button variant="secondary" onClick={() => setConfirming(false)}>
            Keep editing
          </Button>
        </div>
      </Dialog>
    </>
  );
}

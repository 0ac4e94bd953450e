import { roleLabels } from '@evenhand/entities';
import { Link } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { useAcceptRole } from '@/features/auth/api';
import { ApiError } from '@/lib/api-client';

/** Taking on a school role one was named for: nothing changes for the account until this button is pressed. */
export function AcceptRole({ token }: { token: string }) {
  const accept = useAcceptRole();
  if (accept.data) {
    return (
      <div className="space-y-5">
        <Alert tone="success">
          You are now {roleLabels[accept.data.role].toLowerCase()} at {accept.data.siteName}.
        </Alert>
        <Link to="/" className="inline-block font-semibold">
          Go to your start page
        </Link>
      </div>
    );
  }
  const refused = accept.error instanceof ApiError ? accept.error.message : accept.error ? 'The role could not be accepted; try again.' : null;
  return (
    <div className="space-y-5">
      {refused && (
        <Alert tone="error" title="Not accepted">
          {refused}
        </Alert>
      )}
      <p>A coordinator has named you for a role at a school. Accept it to see that school’s classrooms or results with this account.</p>
      <Button type="button" busy={accept.isPending} onClick={() => accept.mutate(token)}>
        Accept the role
      </Button>
    </div>
  );
}

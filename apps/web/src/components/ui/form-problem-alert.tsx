import type { ReactNode } from 'react';
import { Alert } from '@/components/ui/alert';
import type { FormProblem } from '@/lib/form-errors';

/** Why a form was refused: the API's message and any issue that names none of the form's fields. */
export function FormProblemAlert({ problem, children }: { problem: FormProblem; children?: ReactNode }) {
  return (
    <Alert tone="error">
      <p>{problem.message}</p>
      {problem.otherIssues.length > 0 && (
        <ul className="mt-1 list-disc pl-5">
          {problem.otherIssues.map((issue) => (
            <li key={`${issue.path}:${issue.message}`}>{issue.message}</li>
          ))}
        </ul>
      )}
      {children}
    </Alert>
  );
}

import type { FieldIssue } from '@evenhand/entities';
import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { ApiError } from '@/lib/api-client';

export interface FormProblem {
  message: string;
  /** Issues that name no field of this form, listed with the message. */
  otherIssues: FieldIssue[];
}

/**
 * Puts the API's field issues (`roles.0.siteId`) onto the form's own fields and returns what the
 * form shows above them. `fields` are the form's top-level names; issues for anything else stay listed.
 */
export function applyApiError<T extends FieldValues>(
  error: unknown,
  setError: UseFormSetError<T>,
  fields: readonly string[],
): FormProblem {
  if (!(error instanceof ApiError)) {
    return { message: 'Something unexpected went wrong. Please try again.', otherIssues: [] };
  }
  const otherIssues: FieldIssue[] = [];
  for (const issue of error.fieldIssues) {
    if (fields.includes(issue.path.split('.')[0])) {
      setError(issue.path as Path<T>, { type: 'server', message: issue.message });
    } else {
      otherIssues.push(issue);
    }
  }
  return { message: error.message, otherIssues };
}

/** An empty text field read as "none" (null) or "not given" (undefined), for optional fields. */
export const emptyToNull = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? null : v);
export const emptyToUndefined = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);

import type { z } from 'zod';

/**
 * Plain-English messages for the checks the shared schemas leave to zod's defaults (a number left
 * empty, a bound). Passed to zodResolver as its error map; a schema's own messages still win.
 */
export function plainFormMessages(issue: z.core.$ZodRawIssue): string | undefined {
  switch (issue.code) {
    case 'invalid_type':
      if (issue.expected === 'number') return 'Enter a number';
      if (issue.expected === 'string' && issue.input === undefined) return 'Choose or enter a value';
      return undefined;
    case 'too_small':
      if (issue.origin !== 'number') return undefined;
      return issue.inclusive ? `Enter ${String(issue.minimum)} or more` : `Enter a number above ${String(issue.minimum)}`;
    case 'too_big':
      if (issue.origin !== 'number') return undefined;
      return issue.inclusive ? `Enter ${String(issue.maximum)} or less` : `Enter a number below ${String(issue.maximum)}`;
    case 'invalid_format':
      return issue.format === 'uuid' ? 'Choose one' : undefined;
    default:
      return undefined;
  }
}

export const plainMessages = { error: plainFormMessages };

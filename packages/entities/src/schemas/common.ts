import { z } from 'zod';

export const idSchema = z.uuid();

/** A NUL character, or half of a UTF-16 surrogate pair with its other half missing. */
// eslint-disable-next-line no-control-regex -- the NUL character is exactly what this refuses
const NOT_TEXT = /\u0000|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

/**
 * Every text field people send goes through this: PostgreSQL cannot store a NUL character, and a lone surrogate
 * is not text at all (it would not survive the audit trail's JSON), so both are refused at validation, where the
 * error names the field. Chain `.trim()`, `.min()`, `.max()` as for any string.
 */
export const plainText = () => z.string().refine((s) => !NOT_TEXT.test(s), 'Remove the control character or broken symbol from this text');

function isTimeZone(name: string): boolean {
  try {
    new Intl.DateTimeFormat('en-US', { timeZone: name });
    return true;
  } catch {
    return false;
  }
}

/** An IANA time-zone name, as the browser and Node know them. */
export const timeZoneSchema = z
  .string()
  .trim()
  .min(1, 'Enter a time zone')
  .max(64)
  .refine(isTimeZone, 'Use a time-zone name such as America/Chicago or UTC');

export const idParamsSchema = z.object({ id: idSchema });

/** Every list accepts `?limit=&offset=` and answers `{ items, total }`. */
export const paginationQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});

export function pageOf<T extends z.ZodType>(item: T) {
  return z.object({ items: z.array(item), total: z.number().int().min(0) });
}

/** The one error shape of the API: `{ error: { code, message, details? } }`. */
export const errorCodeSchema = z.enum([
  'validation_failed',
  'unauthenticated',
  'forbidden',
  'not_found',
  'conflict',
  'csrf_failed',
  'rate_limited',
  'payload_too_large',
  'unavailable',
  'internal',
]);
export type ErrorCode = z.infer<typeof errorCodeSchema>;

export const fieldIssueSchema = z.object({ path: z.string(), message: z.string() });
export type FieldIssue = z.infer<typeof fieldIssueSchema>;

export const errorBodySchema = z
  .object({
    error: z.object({
      code: errorCodeSchema,
      message: z.string(),
      details: z.unknown().optional(),
    }),
  })
  .meta({ id: 'Error' });
export type ErrorBody = z.infer<typeof errorBodySchema>;

export const healthSchema = z.object({ status: z.enum(['ok', 'degraded']), db: z.enum(['ok', 'down']) });
export type Health = z.infer<typeof healthSchema>;

import { errorBodySchema, fieldIssueSchema, type ErrorCode, type FieldIssue } from '@evenhand/entities';

const CSRF_COOKIE = 'evenhand_csrf';
const CSRF_HEADER = 'X-CSRF-Token';
const SAFE_METHODS = new Set(['GET', 'HEAD']);

/** Codes for error answers that did not carry the API's JSON shape (a proxy page, an empty body). */
const codeForStatus: Record<number, ErrorCode> = {
  400: 'validation_failed',
  401: 'unauthenticated',
  403: 'forbidden',
  404: 'not_found',
  409: 'conflict',
  413: 'payload_too_large',
  429: 'rate_limited',
  502: 'unavailable',
  503: 'unavailable',
  504: 'unavailable',
};

/** Every failed call to the API, whatever went wrong, surfaces as this one error. */
export class ApiError extends Error {
  override readonly name = 'ApiError';
  /** HTTP status; 0 when the server could not be reached at all. */
  readonly status: number;
  readonly code: ErrorCode;
  readonly details: unknown;
  /** The `details.issues` of a validation error, each naming the field it belongs to (`roles.0.siteId`). */
  readonly fieldIssues: FieldIssue[];

  constructor(init: { status: number; code: ErrorCode; message: string; details?: unknown }) {
    super(init.message);
    this.status = init.status;
    this.code = init.code;
    this.details = init.details;
    this.fieldIssues = issuesIn(init.details);
  }
}

function issuesIn(details: unknown): FieldIssue[] {
  if (typeof details !== 'object' || details === null || !('issues' in details)) return [];
  const parsed = fieldIssueSchema.array().safeParse(details.issues);
  return parsed.success ? parsed.data : [];
}

function readCookie(name: string): string | undefined {
  const entry = document.cookie.split('; ').find((c) => c.startsWith(`${name}=`));
  return entry === undefined ? undefined : decodeURIComponent(entry.slice(name.length + 1));
}

/** The header a state-changing request carries: the readable CSRF cookie, sent back (double submit). */
export function csrfHeader(): Record<string, string> {
  const csrf = readCookie(CSRF_COOKIE);
  return csrf ? { [CSRF_HEADER]: csrf } : {};
}

/** The ApiError for a failed answer, from the API's error shape or, failing that, its status. */
export async function errorFrom(response: Response): Promise<ApiError> {
  const text = await response.text().catch(() => '');
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch {
    json = undefined;
  }
  const body = errorBodySchema.safeParse(json);
  if (body.success) {
    return new ApiError({ status: response.status, ...body.data.error });
  }
  return new ApiError({
    status: response.status,
    code: codeForStatus[response.status] ?? 'internal',
    message:
      response.status >= 500
        ? `Evenhand's server is not answering properly right now (HTTP ${response.status}). Please try again in a moment.`
        : `The request was refused (HTTP ${response.status}).`,
  });
}

/** Anything with zod's `parse`: the response schemas come from @evenhand/entities. */
interface Schema<T> {
  parse(data: unknown): T;
}

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';

interface RequestOptions<T> {
  method?: Method;
  query?: Record<string, string | number | undefined>;
  body?: unknown;
  /** Validates the answer; without one the body is ignored (204 answers). */
  schema?: Schema<T>;
  signal?: AbortSignal;
}

/** The one way the web app talks to the API: JSON, the session cookie, and the CSRF header on writes. */
export async function apiRequest<T = void>(path: string, options: RequestOptions<T> = {}): Promise<T> {
  const { method = 'GET', query, body, schema, signal } = options;
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(query ?? {})) {
    if (value !== undefined && value !== '') search.set(key, String(value));
  }
  const qs = search.toString();
  const url = `/api${path}${qs ? `?${qs}` : ''}`;

  const headers: Record<string, string> = { Accept: 'application/json' };
  if (body !== undefined) headers['Content-Type'] = 'application/json';
  if (!SAFE_METHODS.has(method)) {
    const csrf = readCookie(CSRF_COOKIE);
    if (csrf) headers[CSRF_HEADER] = csrf;
  }

  let response: Response;
  try {
    response = await fetch(url, {
      method,
      headers,
      body: body === undefined ? undefined : JSON.stringify(body),
      credentials: 'same-origin',
      signal,
    });
  } catch (cause) {
    if (signal?.aborted) throw cause;
    throw new ApiError({
      status: 0,
      code: 'unavailable',
      message: 'Evenhand could not be reached. Check your connection and try again.',
    });
  }

  if (!response.ok) throw await errorFrom(response);
  if (!schema || response.status === 204) return undefined as T;
  try {
    return schema.parse(await response.json());
  } catch {
    throw new ApiError({
      status: response.status,
      code: 'internal',
      message: 'The server sent an answer this page does not understand. Reloading the page may help.',
    });
  }
}

import type { ErrorRequestHandler, RequestHandler } from 'express';
import { z } from 'zod';
import type { ErrorCode, FieldIssue } from '@evenhand/entities';

const statusOf: Record<ErrorCode, number> = {
  validation_failed: 400,
  unauthenticated: 401,
  forbidden: 403,
  csrf_failed: 403,
  not_found: 404,
  conflict: 409,
  payload_too_large: 413,
  rate_limited: 429,
  internal: 500,
  unavailable: 503,
};

/** The one error type services throw; the error middleware turns it into `{ error: { code, message, details } }`. */
export class AppError extends Error {
  readonly status: number;
  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.status = statusOf[code];
  }

  static validation(message: string, issues?: FieldIssue[]) {
    return new AppError('validation_failed', message, issues ? { issues } : undefined);
  }
  static notFound(what: string) {
    return new AppError('not_found', `${what} was not found`);
  }
  static forbidden(message = 'You do not have access to this') {
    return new AppError('forbidden', message);
  }
  static conflict(message: string, details?: unknown) {
    return new AppError('conflict', message, details);
  }
}

export function issuesOf(error: z.ZodError): FieldIssue[] {
  return error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
}

export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new AppError('not_found', `No such endpoint: ${req.method} ${req.originalUrl.split('?')[0]}`));
};

type BodyParserError = Error & { type?: string; status?: number };

type DatabaseError = Error & { code?: string; constraint?: string; driverError?: { code?: string; constraint?: string; message?: string } };

/** What a unique index or key means to the person who ran into it. */
const duplicateOf: Record<string, string> = {
  classrooms_site_name: 'This school already has a classroom with this name',
  users_email_key: 'An account with this e-mail address already exists',
  cohorts_study_name: 'This study already has a cohort with this name',
  measures_study_name: 'This study already has a measure with this name',
  waves_study_name: 'This study already has a wave with this name',
  sites_code_key: 'A school with this code already exists',
};

/**
 * A refusal by the database that the services did not see coming (two requests racing for one name, a guard
 * trigger): the person gets a clear 4xx, never a 500. Null for anything else.
 */
function fromDatabase(err: DatabaseError): AppError | null {
  const code = err.driverError?.code ?? err.code;
  const constraint = err.driverError?.constraint ?? err.constraint;
  switch (code) {
    case '23505':
      return AppError.conflict((constraint && duplicateOf[constraint]) ?? 'This would duplicate something that already exists');
    case '23000': // the guard triggers: locked, append-only, read by a locked result
    case '23503':
    case '23514':
      return AppError.conflict(`The database refused this change: ${err.driverError?.message ?? err.message}`);
    case '40001':
    case '40P01':
      return AppError.conflict('Another change was made at the same moment; try again');
    case '22P02':
    case '22021':
    case '22001':
    case '22003':
      return AppError.validation('A value is not in a form this field accepts');
    default:
      return null;
  }
}

export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  let error: AppError;
  if (err instanceof AppError) {
    error = err;
  } else if ((err as BodyParserError).type === 'entity.too.large') {
    error = new AppError('payload_too_large', 'The request body is too large');
  } else if ((err as BodyParserError).type === 'entity.parse.failed') {
    error = AppError.validation('The request body is not valid JSON');
  } else if (err instanceof URIError || (err as BodyParserError).status === 400) {
    // Express refuses a path whose percent-encoding is not UTF-8 (and parsers other malformed requests) with status 400.
    error = AppError.validation('The request’s address or body is malformed');
  } else {
    const refused = fromDatabase(err as DatabaseError);
    if (refused) req.log?.warn({ err }, 'refused by the database');
    else req.log?.error({ err }, 'unhandled error');
    error = refused ?? new AppError('internal', 'Something went wrong on our side; the error has been logged');
  }
  const body: { error: { code: string; message: string; details?: unknown } } = {
    error: { code: error.code, message: error.message },
  };
  if (error.details !== undefined) body.error.details = error.details;
  res.status(error.status).json(body);
};

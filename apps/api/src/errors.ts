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

export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  let error: AppError;
  if (err instanceof AppError) {
    error = err;
  } else if ((err as BodyParserError).type === 'entity.too.large') {
    error = new AppError('payload_too_large', 'The request body is too large');
  } else if ((err as BodyParserError).type === 'entity.parse.failed') {
    error = AppError.validation('The request body is not valid JSON');
  } else {
    req.log?.error({ err }, 'unhandled error');
    error = new AppError('internal', 'Something went wrong on our side; the error has been logged');
  }
  const body: { error: { code: string; message: string; details?: unknown } } = {
    error: { code: error.code, message: error.message },
  };
  if (error.details !== undefined) body.error.details = error.details;
  res.status(error.status).json(body);
};

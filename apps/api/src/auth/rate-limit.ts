import type { RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { AppError } from '../errors.js';

const WINDOW_MS = 15 * 60 * 1000;
const MAX_FAILURES = 10;

const refuse: RequestHandler = (_req, _res, next) =>
  next(new AppError('rate_limited', 'Too many failed sign-in attempts; wait 15 minutes and try again'));

/**
 * Counts failed sign-ins (successful ones are not counted) per client address and per account,
 * so neither one address guessing many accounts nor many addresses guessing one account get far.
 */
export function signInLimiters(): RequestHandler[] {
  const common = { windowMs: WINDOW_MS, limit: MAX_FAILURES, skipSuccessfulRequests: true, standardHeaders: 'draft-8' as const, legacyHeaders: false, handler: refuse };
  return [
    rateLimit({ ...common, keyGenerator: (req) => `ip:${ipKeyGenerator(req.ip ?? 'unknown')}` }),
    rateLimit({
      ...common,
      keyGenerator: (req) => `account:${String((req.body as { email?: unknown })?.email ?? '').trim().toLowerCase()}`,
    }),
  ];
}

/** Reset e-mails: every request counts (the answer never reveals whether the address exists). */
export function passwordResetLimiter(): RequestHandler {
  return rateLimit({
    windowMs: WINDOW_MS,
    limit: 5,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => `reset:${ipKeyGenerator(req.ip ?? 'unknown')}`,
    handler: (_req, _res, next) => next(new AppError('rate_limited', 'Too many reset requests; wait 15 minutes and try again')),
  });
}

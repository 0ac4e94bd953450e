import type { Request, RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { AppError } from '../errors.js';

const WINDOW_MS = 15 * 60 * 1000;
/** Failed sign-ins from one address (all accounts) in 15 minutes; the address is the client's as `TRUST_PROXY` says. */
const MAX_FAILURES_PER_ADDRESS = 20;

/** How long to wait after failures: none for the first `free`, then 1, 2, 4 … seconds, never more than `maxSeconds`. */
export interface Backoff {
  free: number;
  maxSeconds: number;
}

/**
 * An account from one address: after 5 failures each further one doubles the wait, up to 15 minutes. The account
 * from anywhere: after 20 failures, waits of at most 30 seconds, so guessing from many addresses stays slow while
 * a stranger can never keep the owner out for more than half a minute (there is no lock).
 */
export const accountFromAddress: Backoff = { free: 5, maxSeconds: 15 * 60 };
export const accountFromAnywhere: Backoff = { free: 20, maxSeconds: 30 };

const waitSeconds = (policy: Backoff, failures: number) => (failures < policy.free ? 0 : Math.min(policy.maxSeconds, 2 ** (failures - policy.free)));

/** Failure counts with the time of the last failure; forgotten after a quiet window. In memory, per process. */
class FailureLog {
  private entries = new Map<string, { failures: number; last: number }>();

  constructor(private readonly policy: Backoff) {}

  /** Seconds until the next attempt is allowed (0: now). */
  retryAfter(key: string, now: number): number {
    const e = this.entries.get(key);
    if (!e) return 0;
    if (now - e.last > WINDOW_MS + this.policy.maxSeconds * 1000) {
      this.entries.delete(key);
      return 0;
    }
    return Math.max(0, Math.ceil((e.last + waitSeconds(this.policy, e.failures) * 1000 - now) / 1000));
  }

  failed(key: string, now: number) {
    const e = this.entries.get(key);
    this.entries.set(key, { failures: (e?.failures ?? 0) + 1, last: now });
    if (this.entries.size > 100_000) this.entries.delete(this.entries.keys().next().value!);
  }

  succeeded(key: string) {
    this.entries.delete(key);
  }
}

const accountOf = (req: Request) => String((req.body as { email?: unknown })?.email ?? '').trim().toLowerCase();
const addressOf = (req: Request) => ipKeyGenerator(req.ip ?? 'unknown');

/** Slows repeated failures on one account, per address and overall, by backoff rather than a lock. */
function accountBackoff(): RequestHandler {
  const pairs = new FailureLog(accountFromAddress);
  const accounts = new FailureLog(accountFromAnywhere);
  return (req, res, next) => {
    const account = accountOf(req);
    const pair = `${account}|${addressOf(req)}`;
    const now = Date.now();
    const wait = Math.max(pairs.retryAfter(pair, now), accounts.retryAfter(account, now));
    if (wait > 0) {
      res.set('Retry-After', String(wait));
      return next(new AppError('rate_limited', `Too many failed sign-ins for this account; try again in ${wait} second${wait === 1 ? '' : 's'}`));
    }
    res.on('finish', () => {
      if (res.statusCode === 401) {
        pairs.failed(pair, Date.now());
        accounts.failed(account, Date.now());
      } else if (res.statusCode === 200) {
        pairs.succeeded(pair);
        accounts.succeeded(account);
      }
    });
    next();
  };
}

/** Sign-in throttles: failures per client address (a window), and per account with backoff (never a lock). */
export function signInLimiters(): RequestHandler[] {
  return [
    rateLimit({
      windowMs: WINDOW_MS,
      limit: MAX_FAILURES_PER_ADDRESS,
      skipSuccessfulRequests: true,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      keyGenerator: (req) => `ip:${addressOf(req)}`,
      handler: (_req, _res, next) => next(new AppError('rate_limited', 'Too many failed sign-ins from this address; wait 15 minutes and try again')),
    }),
    accountBackoff(),
  ];
}

/** Reset e-mails: every request counts (the answer never reveals whether the address exists). */
export function passwordResetLimiter(): RequestHandler {
  return rateLimit({
    windowMs: WINDOW_MS,
    limit: 5,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => `reset:${addressOf(req)}`,
    handler: (_req, _res, next) => next(new AppError('rate_limited', 'Too many reset requests; wait 15 minutes and try again')),
  });
}

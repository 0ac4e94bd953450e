import type { RequestHandler } from 'express';
import type { Logger } from '../logger.js';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      /** The request's logger (method, address and request id bound); made on first use. */
      log: Logger;
    }
  }
}

const LOGGER = Symbol('logger');
const ID = Symbol('request id');
const LOG = Symbol('log');

interface Logged {
  [LOGGER]: Logger;
  [ID]: number;
  [LOG]?: Logger;
  method: string;
  originalUrl: string;
}

/**
 * `req.log`, made on first use from what the request log left on the request. Defined once on the requests'
 * prototype: a getter defined on each request gave every request a shape of its own, which slowed every later
 * read and write of its fields.
 */
function defineLog(prototype: object): void {
  if (Object.hasOwn(prototype, 'log')) return;
  Object.defineProperty(prototype, 'log', {
    configurable: true,
    get(this: Partial<Logged>) {
      // A request this app's log never saw (none today) has no logger, as before.
      if (!this[LOGGER]) return undefined;
      return (this[LOG] ??= this[LOGGER].child({ reqId: this[ID], method: this.method, url: this.originalUrl }));
    },
  });
}

/**
 * One line per answered request: method, address, status and time. Nothing is built for a request unless the level
 * logs it: a child logger bound to the whole request (all its headers, redacted) cost a tenth of a request's time.
 */
export function requestLog(logger: Logger, { ignore }: { ignore: (url: string) => boolean }): RequestHandler {
  let lastId = 0;
  return (req, res, next) => {
    defineLog(Object.getPrototypeOf(req) as object);
    const logged = req as unknown as Logged;
    logged[LOGGER] = logger;
    logged[ID] = ++lastId;
    if (logger.isLevelEnabled('info') && !ignore(req.originalUrl)) {
      const started = performance.now();
      res.once('close', () => {
        const ms = Math.round(performance.now() - started);
        if (res.writableFinished) req.log.info({ status: res.statusCode, ms }, 'request completed');
        else req.log.warn({ ms }, 'request aborted');
      });
    }
    next();
  };
}

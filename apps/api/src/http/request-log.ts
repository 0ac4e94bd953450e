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

/**
 * One line per answered request: method, address, status and time. Nothing is built for a request unless the level
 * logs it: a child logger bound to the whole request (all its headers, redacted) cost a tenth of a request's time.
 */
export function requestLog(logger: Logger, { ignore }: { ignore: (url: string) => boolean }): RequestHandler {
  let lastId = 0;
  return (req, res, next) => {
    const id = ++lastId;
    let log: Logger | undefined;
    Object.defineProperty(req, 'log', {
      configurable: true,
      get: () => (log ??= logger.child({ reqId: id, method: req.method, url: req.originalUrl })),
    });
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

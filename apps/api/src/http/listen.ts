import http from 'node:http';
import type { Socket } from 'node:net';
import type { Express } from 'express';

/**
 * Makes `app.listen` build each request and response on the app's own prototypes. Express otherwise swaps their
 * prototypes as each request arrives, after which V8 gives every request fresh hidden classes: each field that
 * Express and the middleware then add allocates a new one, and every read of a field takes the slow path. That cost
 * about half of a small answer's time. Made with the app's prototypes from the start, Express's swap changes nothing.
 */
export function listenOnOwnPrototypes(app: Express): void {
  // Node's request and response are plain constructor functions, so they can build an object already on another
  // prototype (Reflect.construct would too, but its objects came out slower than Express's own).
  const IncomingMessage = http.IncomingMessage as unknown as (this: http.IncomingMessage, socket: Socket) => void;
  const ServerResponse = http.ServerResponse as unknown as (this: http.ServerResponse, req: http.IncomingMessage, options?: object) => void;
  function AppRequest(this: http.IncomingMessage, socket: Socket) {
    IncomingMessage.call(this, socket);
  }
  AppRequest.prototype = app.request;
  function AppResponse(this: http.ServerResponse, req: http.IncomingMessage, options?: object) {
    ServerResponse.call(this, req, options);
  }
  AppResponse.prototype = app.response;
  const options = { IncomingMessage: AppRequest, ServerResponse: AppResponse } as unknown as http.ServerOptions;

  // As Express's own `listen`: the arguments of `server.listen`, and a last callback also hears a failure to listen.
  app.listen = ((...args: unknown[]) => {
    const server = http.createServer(options, app);
    const last = args.at(-1);
    if (typeof last === 'function') {
      let called = false;
      const once = (...a: unknown[]) => {
        if (called) return;
        called = true;
        (last as (...a: unknown[]) => void)(...a);
      };
      args[args.length - 1] = once;
      server.once('error', once);
    }
    return server.listen(...(args as Parameters<http.Server['listen']>));
  }) as Express['listen'];
}

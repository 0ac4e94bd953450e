import { once } from 'node:events';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { listenOnOwnPrototypes } from './listen.js';

// The API's server builds requests and responses on the app's own prototypes (see listen.ts). Tests elsewhere go
// through supertest, which makes its own server, so these serve the real app from its own `listen`.
let t: TestApp;
let server: http.Server;
let url: string;
beforeAll(async () => {
  t = await startTestApp({ mail: false });
  server = t.app.listen(0, '127.0.0.1');
  await once(server, 'listening');
  url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(async () => {
  server.closeAllConnections();
  server.close();
  await t.close();
});

describe('the API’s own server', () => {
  it('hands Express requests and responses already on the app’s prototypes, still Node’s own kinds', async () => {
    const arrived: { req: object; res: object }[] = [];
    const seen = (req: http.IncomingMessage, res: http.ServerResponse) => arrived.push({ req: Object.getPrototypeOf(req), res: Object.getPrototypeOf(res) });
    server.prependListener('request', seen);
    try {
      await request(url).get('/api/health').expect(200);
    } finally {
      server.off('request', seen);
    }
    expect(arrived).toEqual([{ req: t.app.request, res: t.app.response }]);
    expect(t.app.request).toBeInstanceOf(http.IncomingMessage);
    expect(t.app.response).toBeInstanceOf(http.ServerResponse);
  });

  it('answers as through any other server: a signed-in read, a refusal in the one error shape, security headers, a body', async () => {
    const lead = await signIn(t.app, 'lead@evenhand.test');
    const me = await request(url).get('/api/auth/me').set('authorization', `Bearer ${lead.token}`).expect(200);
    expect(me.body.user.email).toBe('lead@evenhand.test');
    expect(me.headers['cache-control']).toBe('no-store');
    expect(me.headers['x-content-type-options']).toBe('nosniff');
    const refused = await request(url).get('/api/auth/me').expect(401);
    expect(refused.body.error.code).toBe('unauthenticated');
    const bad = await request(url).post('/api/auth/login').set('content-type', 'application/json').send('{"email":').expect(400);
    expect(bad.body.error).toBeDefined();
    const signedIn = await request(url).post('/api/auth/login').send({ email: 'lead@evenhand.test', password: 'wrong password' }).expect(401);
    expect(signedIn.body.error.code).toBe('unauthenticated');
  });

  it('as Express’s own listen: a failure to listen reaches the callback', async () => {
    const app = express();
    listenOnOwnPrototypes(app);
    const port = (server.address() as AddressInfo).port;
    const failed = await new Promise<unknown>((resolve) => app.listen(port, '127.0.0.1', resolve));
    expect(failed).toMatchObject({ code: 'EADDRINUSE' });
  });
});

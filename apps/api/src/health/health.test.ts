import net from 'node:net';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../app.js';
import { createDataSource } from '../db/data-source.js';
import { createLogger } from '../logger.js';
import { createMailer } from '../mail/mailer.js';
import { startTestApp, testConfig, type TestApp } from '../../test/app.js';

/** A TCP relay in front of PostgreSQL that can be cut and restored, like a database restart. */
function relay(target: URL) {
  const sockets = new Set<net.Socket>();
  const server = net.createServer((client) => {
    const upstream = net.connect(Number(target.port), target.hostname);
    for (const s of [client, upstream]) {
      sockets.add(s);
      s.on('close', () => sockets.delete(s));
      s.on('error', () => s.destroy());
    }
    client.pipe(upstream).pipe(client);
  });
  let port = 0;
  return {
    get port() {
      return port;
    },
    up: () => new Promise<void>((resolve) => server.listen(port, '127.0.0.1', () => ((port = (server.address() as net.AddressInfo).port), resolve()))),
    down: () =>
      new Promise<void>((resolve) => {
        for (const s of sockets) s.destroy();
        server.close(() => resolve());
      }),
  };
}

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('GET /api/health', () => {
  it('answers ok while the database is reachable', async () => {
    const res = await request(t.app).get('/api/health');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ status: 'ok', db: 'ok' });
  });

  it('answers 503 while the database is unreachable and recovers by itself when it is back', async () => {
    const target = new URL(t.databaseUrl);
    const gate = relay(target);
    await gate.up();
    const viaRelay = new URL(t.databaseUrl);
    viaRelay.port = String(gate.port);
    const config = testConfig(viaRelay.toString());
    const db = createDataSource(config.databaseUrl);
    await db.initialize();
    const mailer = createMailer(config);
    const app = createApp({ config, db, mailer, logger: createLogger(config), jobs: t.jobs });
    try {
      expect((await request(app).get('/api/health')).status).toBe(200);
      await gate.down();
      const down = await request(app).get('/api/health');
      expect(down.status).toBe(503);
      expect(down.body).toEqual({ status: 'degraded', db: 'down' });
      await gate.up();
      const back = await request(app).get('/api/health');
      expect(back.status).toBe(200);
      expect(back.body.db).toBe('ok');
    } finally {
      mailer.close();
      await db.destroy();
      await gate.down();
    }
  });
});

describe('unknown and oversized requests', () => {
  it('answers an unknown API path with 404 in the error shape', async () => {
    const res = await request(t.app).get('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ error: { code: 'not_found', message: 'No such endpoint: GET /api/no-such-thing' } });
  });

  it('answers a body over 1 MB with 413 in the error shape', async () => {
    const res = await request(t.app)
      .post('/api/auth/login')
      .set('content-type', 'application/json')
      .send(JSON.stringify({ email: 'a@b.org', password: 'x'.repeat(1_100_000) }));
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('payload_too_large');
  });
});

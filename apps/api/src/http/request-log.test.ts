import { Writable } from 'node:stream';
import express from 'express';
import { pino } from 'pino';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { requestLog } from './request-log.js';

function capture(level: string) {
  const lines: Record<string, unknown>[] = [];
  const stream = new Writable({
    write(chunk, _enc, done) {
      lines.push(JSON.parse(chunk.toString()));
      done();
    },
  });
  const app = express();
  app.use(requestLog(pino({ level }, stream), { ignore: (url) => url === '/quiet' }));
  app.get('/ok', (_req, res) => res.json({ ok: true }));
  app.get('/quiet', (_req, res) => res.json({ ok: true }));
  app.get('/fails', (req, res) => {
    req.log.error({ why: 'test' }, 'unhandled error');
    res.status(500).end();
  });
  return { app, lines };
}

describe('the request log', () => {
  it('writes one line per answered request with method, address, status and time, and never the headers', async () => {
    const { app, lines } = capture('info');
    await request(app).get('/ok?x=1').set('authorization', 'Bearer secret-token').set('cookie', 'evenhand_session=secret').expect(200);
    await request(app).get('/quiet').expect(200);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatchObject({ msg: 'request completed', method: 'GET', url: '/ok?x=1', status: 200 });
    expect(typeof lines[0].ms).toBe('number');
    expect(JSON.stringify(lines)).not.toContain('secret');
  });

  it('gives an error logged during a request the same request id as its completion line', async () => {
    const { app, lines } = capture('info');
    await request(app).get('/fails').expect(500);
    expect(lines.map((l) => l.msg)).toEqual(['unhandled error', 'request completed']);
    expect(lines[0].reqId).toBe(lines[1].reqId);
  });

  it('writes nothing when the level is off', async () => {
    const { app, lines } = capture('silent');
    await request(app).get('/ok').expect(200);
    await request(app).get('/fails').expect(500);
    expect(lines).toHaveLength(0);
  });
});

import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from './app.js';
import { createLogger } from './logger.js';
import { createMailer } from './mail/mailer.js';
import { startTestApp, testConfig, type TestApp } from '../test/app.js';

let t: TestApp;
let web: string;
let app: ReturnType<typeof createApp>;
beforeAll(async () => {
  t = await startTestApp();
  // A built web app as Vite lays it out: index.html and content-hashed files under assets/.
  web = mkdtempSync(path.join(tmpdir(), 'evenhand-web-'));
  mkdirSync(path.join(web, 'assets'));
  writeFileSync(path.join(web, 'index.html'), '<!doctype html><title>Evenhand</title>');
  writeFileSync(path.join(web, 'assets', 'routes-Ab12Cd34.js'), 'export const page = 1;');
  const config = testConfig(t.databaseUrl, { WEB_DIST: web });
  app = createApp({ config, db: t.db, mailer: createMailer(config), logger: createLogger(config), jobs: t.jobs });
});
afterAll(async () => {
  rmSync(web, { recursive: true, force: true });
  await t.close();
});

describe('the built web app', () => {
  it('serves the page for any client-side route', async () => {
    const res = await request(app).get('/studies/some-study/checks');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/html/);
    expect(res.text).toContain('<title>Evenhand</title>');
  });

  it('caches content-hashed files for good', async () => {
    const res = await request(app).get('/assets/routes-Ab12Cd34.js');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/javascript/);
    expect(res.headers['cache-control']).toBe('public, max-age=31536000, immutable');
  });

  it('answers a file of an earlier release with 404, not the page, so a page opened before a release reports the failed load', async () => {
    const res = await request(app).get('/assets/routes-Gone9999.js');
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ error: { code: 'not_found', message: 'No such file: /assets/routes-Gone9999.js (it may belong to an earlier release)' } });
  });
});

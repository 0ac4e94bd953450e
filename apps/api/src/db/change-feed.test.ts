import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { urlForDatabase } from '../../test/database.js';
import { changeFeed } from './change-feed.js';

// The session check keeps the account's row in memory; these show that a copy is served, and that any change
// to it, made by this process or by any other connection to the database, ends it.
let t: TestApp;
let lead: SignedIn;
let other: pg.Client;

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const me = () => request(t.app).get('/api/auth/me').set('authorization', `Bearer ${lead.token}`);

async function until(what: string, check: () => Promise<boolean>) {
  for (let i = 0; i < 50; i++) {
    if (await check()) return;
    await sleep(100);
  }
  throw new Error(`timed out waiting until ${what}`);
}

/** Another connection, as a second API process or an operator would write (the cluster's admin). */
async function elsewhere(sql: string, params: unknown[] = [], { triggers = true } = {}) {
  if (!triggers) await other.query(`SET session_replication_role = replica`);
  try {
    await other.query(sql, params);
  } finally {
    if (!triggers) await other.query(`SET session_replication_role = DEFAULT`);
  }
}

beforeAll(async () => {
  t = await startTestApp({ mail: false });
  other = new pg.Client({ connectionString: urlForDatabase(new URL(t.databaseUrl).pathname.slice(1)) });
  await other.connect();
  lead = await signIn(t.app, 'lead@evenhand.test');
  await me().expect(200);
  await until('the change feed listens', async () => changeFeed(t.db).listening);
});
afterAll(async () => {
  await other.end();
  await t.close();
});

describe('the session check’s memory copy', () => {
  it('is served while nothing tells it of a change (a write with the change triggers off goes unseen)', async () => {
    expect((await me().expect(200)).body.user.name).not.toBe('Unseen Name');
    await elsewhere(`UPDATE users SET name = 'Unseen Name' WHERE id = $1`, [lead.userId], { triggers: false });
    expect((await me().expect(200)).body.user.name).not.toBe('Unseen Name');
  });

  it('when another connection renames the account, then the new name is shown', async () => {
    await elsewhere(`UPDATE users SET name = 'Renamed Elsewhere' WHERE id = $1`, [lead.userId]);
    await until('the new name shows', async () => (await me()).body.user?.name === 'Renamed Elsewhere');
  });

  it('when another connection renames a school of the account, then its grants show the new name', async () => {
    const principal = await signIn(t.app, 'principal1@evenhand.test');
    const asPrincipal = () => request(t.app).get('/api/auth/me').set('authorization', `Bearer ${principal.token}`);
    const grant = (await asPrincipal().expect(200)).body.user.roles.find((g: { siteId: string | null }) => g.siteId);
    await elsewhere(`UPDATE sites SET name = 'Renamed School' WHERE id = $1`, [grant.siteId]);
    await until('the school’s new name shows', async () => (await asPrincipal()).body.user.roles.some((g: { siteName: string }) => g.siteName === 'Renamed School'));
  });

  it('when another connection ends the account’s sessions, then its token is refused', async () => {
    await me().expect(200);
    await elsewhere(`UPDATE users SET session_version = session_version + 1 WHERE id = $1`, [lead.userId]);
    await until('the token is refused', async () => (await me()).status === 401);
    lead = await signIn(t.app, 'lead@evenhand.test');
  });

  it('when another connection removes a grant, then the role is gone from the session', async () => {
    await me().expect(200);
    await elsewhere(`DELETE FROM role_grants WHERE user_id = $1`, [lead.userId]);
    await until('the role is gone', async () => (await me()).body.user?.roles.length === 0);
    await elsewhere(`INSERT INTO role_grants (user_id, role) VALUES ($1, 'research_lead')`, [lead.userId]);
    await until('the role is back', async () => (await me()).body.user?.roles.length === 1);
  });

  it('when this process signs the account out, then the very next request is refused', async () => {
    const s = await signIn(t.app, 'coordinator@evenhand.test');
    const asCoordinator = () => request(t.app).get('/api/auth/me').set('authorization', `Bearer ${s.token}`);
    await asCoordinator().expect(200);
    await asCoordinator().expect(200);
    await request(t.app).post('/api/auth/logout').set('authorization', `Bearer ${s.token}`).expect(204);
    await asCoordinator().expect(401);
  });

  it('when the listening connection is lost, then nothing is served from memory until it listens again', async () => {
    await me().expect(200);
    await other.query(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = current_database() AND query = 'LISTEN evenhand_changes'`);
    await until('the loss is noticed', async () => !changeFeed(t.db).listening);
    await elsewhere(`UPDATE users SET name = 'Read Afresh' WHERE id = $1`, [lead.userId], { triggers: false });
    expect((await me().expect(200)).body.user.name).toBe('Read Afresh');
    await until('the feed listens again', async () => changeFeed(t.db).listening);
    await me().expect(200);
    await elsewhere(`UPDATE users SET name = 'Renamed Again' WHERE id = $1`, [lead.userId]);
    await until('the new name shows', async () => (await me()).body.user?.name === 'Renamed Again');
  });
});

import AxeBuilder from '@axe-core/playwright';
import { expect, request as playwrightRequest, type APIRequestContext, type APIResponse, type Page } from '@playwright/test';
import pg from 'pg';

/** The seed's shared password and its study (apps/api/src/seed). */
export const DEMO_PASSWORD = 'evenhand-demo';
export const DEMO_STUDY = 'Lantern Reading Routine in grades 3 and 4';
/** Student codes as the demo seed writes them; a name in their place would be a privacy failure. */
export const STUDENT_CODE = /^LV-\d{4}$/;

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  // Password hashing is slow on purpose; on a busy machine signing in can take several seconds.
  await expect(page).not.toHaveURL(/\/sign-in/, { timeout: 20_000 });
}

/** An API session for set-up, authenticated with the bearer token (no CSRF header needed). */
export async function apiAs(baseURL: string, email: string): Promise<APIRequestContext> {
  const anonymous = await playwrightRequest.newContext({ baseURL });
  const login = await anonymous.post('/api/auth/login', { data: { email, password: DEMO_PASSWORD } });
  expect(login.status()).toBe(200);
  const { token } = await login.json();
  await anonymous.dispose();
  return playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { Authorization: `Bearer ${token}` } });
}

/** The body of a set-up request that must answer `status` (201 unless told), failing with the API's message otherwise. */
export async function expectStatus<T = { id: string }>(response: Promise<APIResponse>, status = 201): Promise<T> {
  const res = await response;
  expect(res.status(), await res.text()).toBe(status);
  return res.json() as Promise<T>;
}

/** The ISO date `offsetDays` from today, for waves that must be open (or not yet open) when a journey runs. */
export const isoDay = (offsetDays: number) => new Date(Date.now() + offsetDays * 86_400_000).toISOString().slice(0, 10);

/** No serious or critical accessibility problems on the page as it is now. */
export async function expectAccessible(page: Page) {
  const { violations } = await new AxeBuilder({ page }).analyze();
  const bad = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  expect(bad.map((v) => `${v.id}: ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`)).toEqual([]);
}

/** Every student count in the page's tables (columns whose header mentions students), as shown. */
export async function studentCountsShown(page: Page): Promise<string[]> {
  return page.evaluate(() =>
    [...document.querySelectorAll('main table')].flatMap((table) => {
      const heads = [...table.querySelectorAll('thead th')].map((th) => th.textContent ?? '');
      const columns = heads.flatMap((h, i) => (/students/i.test(h) ? [i] : []));
      return [...table.querySelectorAll('tbody tr, tfoot tr')].flatMap((tr) => columns.map((i) => tr.children[i]?.textContent?.trim() ?? ''));
    }),
  );
}

/** Queries the end-to-end database directly, to recompute what the pages show from the rows themselves. */
export async function queryDatabase<T>(sql: string, params: unknown[] = []): Promise<T[]> {
  const url = process.env.E2E_DATABASE_URL;
  if (!url) throw new Error('E2E_DATABASE_URL is not set');
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    return (await client.query(sql, params)).rows as T[];
  } finally {
    await client.end();
  }
}

/** The demo study's wave names ("Autumn 2025"), which the seed takes from the school year before the day it ran. */
export async function demoWaveName(kind: 'baseline' | 'outcome' | 'follow-up'): Promise<string> {
  const [wave] = await queryDatabase<{ name: string }>(`SELECT w.name FROM waves w JOIN studies s ON s.id = w.study_id WHERE s.title = $1 AND w.kind = $2`, [DEMO_STUDY, kind]);
  return wave.name;
}

/**
 * An existing account named as a school's teacher or principal holds the role only once it follows the e-mailed
 * invitation: reads it for `siteName` from the mail catcher and accepts it as the person would.
 */
export async function acceptRoleInvitation(baseURL: string, email: string, siteName: string) {
  const maildev = process.env.MAILDEV_URL ?? 'http://127.0.0.1:1080';
  const mail = await playwrightRequest.newContext();
  let token: string | null = null;
  for (let i = 0; i < 150 && !token; i++) {
    const all = (await (await mail.get(`${maildev}/api/email`)).json()) as { text: string; to: { address: string }[] }[];
    const links = all
      .filter((m) => m.to.some((t) => t.address === email) && m.text.includes(siteName))
      .map((m) => /\/invitations\/accept\?token=([^\s"<]+)/.exec(m.text)?.[1])
      .filter((t): t is string => Boolean(t));
    token = links.length ? decodeURIComponent(links[links.length - 1]) : null;
    if (!token) await new Promise((r) => setTimeout(r, 200));
  }
  await mail.dispose();
  expect(token, `no role invitation for ${siteName} e-mailed to ${email}`).not.toBeNull();
  const api = await playwrightRequest.newContext({ baseURL });
  const login = await api.post('/api/auth/login', { data: { email, password: DEMO_PASSWORD } });
  expect(login.status()).toBe(200);
  const accepted = await api.post('/api/role-invitations/accept', {
    data: { token },
    headers: { Authorization: `Bearer ${(await login.json()).token}` },
  });
  expect(accepted.status(), await accepted.text()).toBe(200);
  await api.dispose();
}

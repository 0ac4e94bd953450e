import { readFile } from 'node:fs/promises';
import { expect, test, type Page } from '@playwright/test';
import { formatInterval, formatNumber, formatPStatement } from '../src/lib/format';
import { DEMO_STUDY, queryDatabase, signIn } from './support';

/**
 * Every screen tells the same story: for the demo's locked primary result, the deciding analysis's p, its interval,
 * Hedges' g with its 95% interval and the verdict read the same on the results page, in the study report, on the
 * principal's My school, in the principal's lock digest as caught by the mail catcher, and in the results CSV.
 */

const MAILDEV = process.env.MAILDEV_URL ?? 'http://127.0.0.1:1080';

interface Caught {
  subject: string;
  text: string;
  date: string;
  to: { address: string }[];
}

/** The CSV's (group, statistic) → value, as exported. */
function readCsv(csv: string): Map<string, string> {
  const rows = csv.trim().split(/\r?\n/).slice(1);
  return new Map(
    rows.map((line) => {
      const [group, statistic, ...rest] = line.split(',');
      return [`${group}|${statistic}`, rest.join(',').replace(/^"|"$/g, '')];
    }),
  );
}

async function primaryLockedRun(page: Page): Promise<{ studyId: string; runId: string; label: string }> {
  const [study] = await queryDatabase<{ id: string }>(`SELECT id FROM studies WHERE title = $1`, [DEMO_STUDY]);
  const comparisons = await (await page.request.get(`/api/studies/${study.id}/comparisons`)).json();
  const primary = comparisons.items.find((c: { isPrimary: boolean }) => c.isPrimary);
  expect(primary.lockedRunId).toBeTruthy();
  return { studyId: study.id, runId: primary.lockedRunId, label: primary.label };
}

test('the locked primary result reads the same on the results page, the report, My school, the digest e-mail and the CSV', async ({ browser }) => {
  test.setTimeout(120_000);
  const lead = await browser.newPage();
  await signIn(lead, 'lead@evenhand.test');
  const { studyId, runId, label } = await primaryLockedRun(lead);

  // The CSV first: its unrounded numbers, rounded as every screen rounds them (src/lib/format.ts).
  await lead.goto(`/studies/${studyId}/comparisons/runs/${runId}`);
  // Pages load lazily; on a busy machine the first paint can take a while.
  await expect(lead.getByRole('heading', { name: 'The primary result' })).toBeVisible({ timeout: 30_000 });
  const download = lead.waitForEvent('download');
  await lead.getByRole('button', { name: 'Download results CSV' }).click();
  const csv = readCsv(await readFile((await (await download).path())!, 'utf8'));
  const num = (key: string) => Number(csv.get(key));
  const p = formatPStatement(num('deciding analysis|p'));
  const met = csv.get('deciding analysis|meets the pre-registered test') === 'true';
  const differenceCi = formatInterval([num('deciding analysis|ci low'), num('deciding analysis|ci high')], 2);
  const g = formatNumber(num('effect size|hedges g'), 2);
  const gLow = formatNumber(num('effect size|g ci low'), 2);
  const gHigh = formatNumber(num('effect size|g ci high'), 2);
  expect(csv.get('deciding analysis|analysis')).toBe('two-level');

  await test.step('the results page', async () => {
    await expect(lead.getByTestId('decided-by')).toContainText(`(${p})`);
    await expect(lead.getByTestId('primary-test')).toContainText(`CI ${differenceCi}); `);
    await expect(lead.getByTestId('primary-test')).toContainText(p);
    await expect(lead.getByTestId('effect-size')).toContainText(`Hedges’ g = ${g} (95% CI ${formatInterval([Number(csv.get('effect size|g ci low')), Number(csv.get('effect size|g ci high'))], 2)})`);
    await expect(lead.getByText(met ? 'Meets the pre-registered test' : 'Does not meet the pre-registered test', { exact: true })).toBeVisible();
  });

  await test.step('the study report', async () => {
    await lead.goto(`/studies/${studyId}/report`);
    await expect(lead.getByRole('heading', { name: 'Study report' })).toBeVisible({ timeout: 30_000 });
    const box = lead.getByRole('heading', { name: `Primary outcome: ${label}` }).locator('..');
    await expect(box).toContainText(`${differenceCi.replace(/^\[|\]$/g, '').replace(', ', ' to ')}`);
    await expect(box).toContainText(`${met ? 'This meets' : 'This does not meet'} the pre-registered test`);
    await expect(box).toContainText(`: ${p}.`);
    await expect(box).toContainText(`Hedges’ g = ${g} (95% CI`);
  });
  await lead.close();

  const principal = await browser.newPage();
  await test.step('My school', async () => {
    await signIn(principal, 'principal1@evenhand.test');
    await expect(principal.getByRole('heading', { level: 1, name: 'My school' })).toBeVisible({ timeout: 30_000 });
    const result = principal.getByRole('main').getByRole('article', { name: label, exact: true });
    const tile = result.getByRole('definition').filter({ hasText: /^(Met|Not met)$/ });
    await expect(tile).toHaveText(met ? 'Met' : 'Not met');
    await expect(result).toContainText(p);
    await expect(result).toContainText(`Hedges’ g = ${g} (95% interval ${gLow} to ${gHigh})`);
  });

  await test.step('the digest e-mail: one per principal for the demo’s locks, naming both results', async () => {
    // The mail catcher may also hold mail from other seeds (another database, same catcher): take this database's
    // lock digest for principal1 from the outbox, then the caught mail that carries exactly its text.
    const [sent] = await queryDatabase<{ text: string }>(
      `SELECT d.text FROM digests d WHERE d.study_id = $1 AND d.kind = 'lock' AND d.recipient_email = 'principal1@evenhand.test' AND d.state = 'sent'`,
      [studyId],
    );
    expect(sent).toBeTruthy();
    const res = await principal.request.get(`${MAILDEV}/api/email`);
    expect(res.ok()).toBe(true);
    const plain = (t: string) => t.replace(/\r\n/g, '\n').trim();
    const same = (a: string) => plain(a) === plain(sent.text);
    const mails = ((await res.json()) as Caught[])
      .filter((m) => m.to.some((t) => t.address === 'principal1@evenhand.test') && same(m.text))
      .sort((a, b) => Date.parse(b.date) - Date.parse(a.date));
    const newest = mails[0];
    expect(newest, 'the lock digest of this database in the mail catcher').toBeTruthy();
    const block = newest.text.slice(newest.text.indexOf(`: ${label}`));
    expect(block).toContain(`Pre-registered test: ${met ? 'Met' : 'Not met'} (${p})`);
    expect(block).toContain(`Effect size (Hedges’ g): ${g} (95% interval ${gLow} to ${gHigh})`);
    // The seed locks every pre-specified comparison in a row: each principal's outbox holds one lock digest naming them all.
    const perPrincipal = await queryDatabase<{ n: number }>(
      `SELECT count(*)::int AS n FROM digests WHERE study_id = $1 AND kind = 'lock' GROUP BY recipient_id`,
      [studyId],
    );
    expect(perPrincipal.length).toBeGreaterThan(0);
    expect(perPrincipal.every((r) => r.n === 1)).toBe(true);
    const [{ locked }] = await queryDatabase<{ locked: number }>(`SELECT count(*)::int AS locked FROM runs WHERE study_id = $1 AND state = 'locked'`, [studyId]);
    if (locked > 1) expect(newest.subject).toMatch(new RegExp(`^${locked} results are locked:`));
  });
  await principal.close();
});

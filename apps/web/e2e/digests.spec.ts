import { expect, test, type Page } from '@playwright/test';
import { expectAccessible } from './support';

const PASSWORD = 'evenhand-demo';
const MAILDEV = process.env.MAILDEV_URL ?? 'http://127.0.0.1:1080';

interface Caught {
  id: string;
  subject: string;
  text: string;
  to: { address: string }[];
}

async function signIn(page: Page, email: string) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

async function mailTo(page: Page, address: string): Promise<Caught[]> {
  const res = await page.request.get(`${MAILDEV}/api/email`);
  expect(res.ok()).toBe(true);
  return ((await res.json()) as Caught[]).filter((m) => m.to.some((t) => t.address === address));
}

test('a principal lands on My school and reads their school’s participation and the locked result in plain words', async ({ page }) => {
  await signIn(page, 'principal1@evenhand.test');
  await expect(page.getByRole('heading', { level: 1, name: 'My school', exact: true })).toBeVisible();
  await expect(page.getByRole('heading', { level: 2, name: 'Alderquill Elementary' })).toBeVisible();
  // Only their own school.
  await expect(page.getByText('Brackenwold Middle School')).toHaveCount(0);

  const taking = page.getByRole('table', { name: 'Classrooms and students with scores, by group' });
  await expect(taking.getByRole('rowheader', { name: 'Intervention classrooms' })).toBeVisible();
  await expect(taking.getByRole('rowheader', { name: 'Comparison classrooms' })).toBeVisible();

  const result = page.getByRole('article').filter({ hasText: 'Oral reading fluency' }).first();
  await expect(result).toContainText('Across all schools in the study, students in intervention classrooms scored');
  await expect(result).toContainText('Hedges’ g');
  await expect(result).toContainText('improvement index');
  await expect(result).toContainText(/It (meets|does not meet) the test registered in the plan/);
  await expect(page.getByText('not for evaluating teachers or for placing students')).toBeVisible();

  // No student count under 10 is shown anywhere: each is a number of 10 or more, or the words that replace it.
  const counts = await page.evaluate(() =>
    [...document.querySelectorAll('table')].flatMap((table) => {
      const heads = [...table.querySelectorAll('thead th')].map((th) => th.textContent ?? '');
      const columns = heads.flatMap((h, i) => (/students/i.test(h) ? [i] : []));
      return [...table.querySelectorAll('tbody tr, tfoot tr')].flatMap((tr) => columns.map((i) => tr.children[i]?.textContent?.trim() ?? ''));
    }),
  );
  expect(counts.length).toBeGreaterThan(0);
  for (const value of counts) {
    if (value === '' || value === 'fewer than 10 students') continue;
    expect(Number(value.replace(/,/g, ''))).toBeGreaterThanOrEqual(10);
  }
  await expectAccessible(page);
});

test('the coordinator previews a digest as the principal sees it, sends digests now, and the e-mail arrives', async ({ page }) => {
  test.setTimeout(60_000);
  await signIn(page, 'coordinator@evenhand.test');
  await expect(page.getByRole('heading', { level: 1, name: 'Studies' })).toBeVisible();
  await page.getByRole('link', { name: 'Lantern Reading Routine in grades 3 and 4' }).click();
  await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Digests' }).click();
  await expect(page.getByRole('heading', { level: 2, name: 'Outbox' })).toBeVisible();
  const outbox = page.getByRole('table', { name: 'Digests of this study' });
  await expect(outbox.getByRole('row').filter({ hasText: 'principal1@evenhand.test' }).first()).toContainText('Sent');
  await expectAccessible(page);

  await outbox.getByRole('row').filter({ hasText: 'principal1@evenhand.test' }).first().getByRole('button', { name: /^Preview/ }).click();
  const dialog = page.getByRole('dialog', { name: 'As the principal sees it' });
  await expect(dialog.getByText('Dr. Helena Moonquarry <principal1@evenhand.test>')).toBeVisible();
  const frame = dialog.frameLocator('iframe');
  await expect(frame.getByText('Alderquill Elementary', { exact: true })).toBeVisible();
  await expect(frame.getByText(/Hedges’ g = /).first()).toBeVisible();
  await dialog.getByRole('button', { name: 'Plain text' }).click();
  await expect(dialog.getByText(/Stop these e-mails: /)).toBeVisible();
  await dialog.getByRole('button', { name: 'Close' }).click();
  await expect(dialog).toBeHidden();

  const before = (await mailTo(page, 'principal1@evenhand.test')).filter((m) => m.subject.startsWith('Update on')).length;
  await page.getByRole('button', { name: 'Send now' }).click();
  const confirm = page.getByRole('dialog', { name: 'Send a digest now?' });
  await expect(confirm).toContainText('6 schools');
  await confirm.getByRole('button', { name: 'Send the digests' }).click();
  await expect(page.getByRole('status').filter({ hasText: 'in the outbox' })).toContainText('6 digests are in the outbox');
  await expect
    .poll(async () => (await mailTo(page, 'principal1@evenhand.test')).filter((m) => m.subject.startsWith('Update on')).length, { timeout: 20_000 })
    .toBe(before + 1);
  const mail = (await mailTo(page, 'principal1@evenhand.test')).filter((m) => m.subject.startsWith('Update on')).at(-1)!;
  expect(mail.subject).toBe('Update on Lantern Reading Routine in grades 3 and 4 (Alderquill Elementary)');
  expect(mail.text).toContain('Alderquill Elementary');
  expect(mail.text).not.toContain('Brackenwold Middle School');
  await expect(outbox.getByRole('row').filter({ hasText: 'Sent now' }).first()).toContainText('Sent', { timeout: 20_000 });
});

test('the e-mail’s link changes how often a principal gets digests, without signing in', async ({ page }) => {
  // The newest: a mail catcher that outlived an earlier seed still holds that seed's links, which no longer work.
  const mail = (await mailTo(page, 'principal2@evenhand.test')).filter((m) => /^(The result is locked|Update on)/.test(m.subject)).at(-1)!;
  const link = mail.text.match(/Stop these e-mails: (\S+)/)![1];
  await page.goto(new URL(link).pathname + new URL(link).search);
  await expect(page.getByRole('heading', { level: 1, name: 'E-mail digests' })).toBeVisible();
  await expect(page.getByText('Hello Samuel Driftwillow.', { exact: false })).toBeVisible();
  await expect(page.getByLabel('No digests')).toBeChecked();
  await expectAccessible(page);
  await page.getByRole('button', { name: 'Stop the digests' }).click();
  await expect(page.getByRole('status').filter({ hasText: 'Saved' })).toContainText('You will not get digests any more');
  // Back to the demo's setting, for anyone who reads the demo after this test.
  await page.getByLabel('Every week while scores are collected, and when a result is locked').check();
  await page.getByRole('button', { name: 'Save my choice' }).click();
  await expect(page.getByRole('status').filter({ hasText: 'Saved' })).toContainText('every week');
});

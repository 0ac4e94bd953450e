import { expect as baseExpect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD, expectAccessible, queryDatabase, signIn } from './support';

// The fake district identity provider (apps/api/dev/identity-provider.ts) that scripts/test.sh starts and
// playwright.config.ts hands to the API; without it the API offers no district sign-in.
test.skip(!process.env.OIDC_ISSUER_URL, 'needs the fake district identity provider: run through npm test (scripts/test.sh)');
// Each journey crosses two servers and runs the accessibility check; on a busy machine that takes a while.
test.describe.configure({ timeout: 120_000 });
const expect = baseExpect.configure({ timeout: 20_000 });

/** From Evenhand's sign-in page to the provider's page, where the person is picked by their address. */
async function signInAtDistrict(page: Page, email: string) {
  await page.getByRole('link', { name: 'Sign in with your district account' }).click();
  await expect(page.getByRole('heading', { level: 1, name: 'District sign-in' })).toBeVisible();
  await page.getByRole('button', { name: new RegExp(email.replace(/[.]/g, '\\.')) }).first().click();
}

/** The demo district's admin, named in the messages about whom to ask. */
async function adminName(): Promise<string> {
  const [admin] = await queryDatabase<{ name: string }>(`SELECT name FROM users WHERE email = 'admin@evenhand.test'`);
  return admin.name;
}

async function noSidewaysScroll(page: Page) {
  expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(page.viewportSize()!.width);
}

test('a research lead signs in with the district account and returns to the page they asked for', async ({ page }) => {
  await page.goto('/studies');
  await expect(page).toHaveURL(/\/sign-in\?next=%2Fstudies/);
  await signInAtDistrict(page, 'lead@evenhand.test');
  await expect(page).toHaveURL(/\/studies$/);
  await expect(page.getByRole('heading', { level: 1, name: 'Studies' })).toBeVisible();
  await page.getByRole('button', { name: 'Sign out' }).click();
  await expect(page.getByRole('button', { name: 'Sign in' })).toBeVisible();
});

test('at 390 px wide, a person nobody invited is told whom to ask, without sideways scroll, and the page is accessible', async ({ page }) => {
  await page.setViewportSize({ width: 390, height: 844 });
  await page.goto('/sign-in');
  await expect(page.getByRole('link', { name: 'Sign in with your district account' })).toBeVisible();
  await noSidewaysScroll(page);
  await expectAccessible(page);

  await signInAtDistrict(page, 'newcomer@evenhand.test');
  const alert = page.getByRole('alert');
  await expect(alert).toContainText('You are not signed in');
  await expect(alert).toContainText('no Evenhand account uses newcomer@evenhand.test');
  await expect(alert).toContainText(`${await adminName()}, admin@evenhand.test`);
  await noSidewaysScroll(page);
  await expectAccessible(page);
  expect(await queryDatabase(`SELECT 1 FROM users WHERE email = 'newcomer@evenhand.test'`)).toHaveLength(0);
});

test('an address the provider has not verified is refused', async ({ page }) => {
  await page.goto('/sign-in');
  await signInAtDistrict(page, 'not verified');
  await expect(page.getByRole('alert')).toContainText('did not confirm that coordinator@evenhand.test is verified');
  await expect(page).toHaveURL(/\/sign-in/);
});

test('the admin turns password sign-in off for everyone else; a teacher is then sent to the district account', async ({ page, browser }) => {
  try {
    await signIn(page, 'admin@evenhand.test');
    await expect(page.getByRole('heading', { level: 1, name: 'Accounts' })).toBeVisible();
    const passwords = page.getByRole('switch', { name: 'Password sign-in for everyone' });
    await expect(passwords).toBeChecked();
    // The switch follows the saved setting, so it flips once the API has answered.
    await passwords.click();
    await expect(passwords).not.toBeChecked();
    await expect(page.getByText(/Off: only the district admin signs in with a password/)).toBeVisible();
    await expect(page.getByText(`Last changed by ${await adminName()}`, { exact: false })).toBeVisible();
    await expectAccessible(page);

    const teacher = await browser.newPage();
    await teacher.goto('/sign-in');
    await expect(teacher.getByText('Evenhand passwords: district admin only')).toBeVisible();
    await teacher.getByLabel('E-mail address').fill('teacher2@evenhand.test');
    await teacher.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
    await teacher.getByRole('button', { name: 'Sign in' }).click();
    await expect(teacher.getByRole('alert')).toContainText('use "Sign in with your district account"');
    await signInAtDistrict(teacher, 'teacher2@evenhand.test');
    await expect(teacher.getByRole('heading', { level: 1, name: 'My classes' })).toBeVisible();
    await teacher.close();

    await passwords.click();
    await expect(passwords).toBeChecked();
    const audit = await queryDatabase<{ after: { passwordSignIn: string } }>(
      `SELECT after FROM audit_events WHERE action = 'sign_in_settings.changed' ORDER BY at`,
    );
    expect(audit.map((a) => a.after.passwordSignIn).slice(-2)).toEqual(['admin_only', 'everyone']);
  } finally {
    await queryDatabase(`UPDATE sign_in_settings SET password_sign_in = 'everyone'`);
  }
});

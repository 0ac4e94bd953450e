import { expect, test, type Page } from '@playwright/test';

const PASSWORD = 'evenhand-demo';

const homes = [
  { email: 'admin@evenhand.test', home: 'Accounts' },
  { email: 'coordinator@evenhand.test', home: 'Studies' },
  { email: 'lead@evenhand.test', home: 'Studies' },
  { email: 'teacher1@evenhand.test', home: 'My classes' },
  { email: 'principal1@evenhand.test', home: 'My school' },
  { email: 'reviewer@evenhand.test', home: 'Studies' },
];

async function signIn(page: Page, email: string, password = PASSWORD) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

for (const { email, home } of homes) {
  test(`${email} signs in and lands on ${home}`, async ({ page }) => {
    await signIn(page, email);
    await expect(page.getByRole('heading', { level: 1, name: home, exact: true })).toBeVisible();
    await page.getByRole('button', { name: 'Sign out' }).click();
    await expect(page.getByRole('button', { name: 'Sign in' })).toBeVisible();
  });
}

test('a wrong password shows the message from the API', async ({ page }) => {
  await signIn(page, 'lead@evenhand.test', 'not-my-password');
  await expect(page.getByRole('alert')).toContainText('The e-mail address or password is not right');
  await expect(page).toHaveURL(/\/sign-in/);
});

test('a teacher cannot open the accounts screen, in the browser or through the API', async ({ page }) => {
  await signIn(page, 'teacher1@evenhand.test');
  await expect(page.getByRole('heading', { level: 1, name: 'My classes' })).toBeVisible();
  await page.goto('/accounts');
  await expect(page.getByText(/not available for your role/i)).toBeVisible();
  await expect(page.getByRole('table')).toHaveCount(0);
  const api = await page.request.get('/api/accounts');
  expect(api.status()).toBe(403);
  expect((await api.json()).error.code).toBe('forbidden');
});

test('a visitor who is not signed in is sent to sign-in and returned to the page they asked for', async ({ page }) => {
  await page.goto('/accounts');
  await expect(page).toHaveURL(/\/sign-in/);
  await page.getByLabel('E-mail address').fill('admin@evenhand.test');
  await page.getByLabel('Password', { exact: true }).fill(PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page).toHaveURL(/\/accounts$/);
  await expect(page.getByRole('heading', { level: 1, name: 'Accounts' })).toBeVisible();
  await expect(page.getByRole('cell', { name: 'admin@evenhand.test' })).toBeVisible();
});

test('an unknown page shows the not-found page', async ({ page }) => {
  await page.goto('/no-such-page');
  await expect(page.getByRole('heading', { level: 1 })).toContainText(/not found/i);
});

test('outside production the sign-in page lists the demo accounts, and one is picked and signed in with the keyboard alone', async ({ page }) => {
  await page.goto('/sign-in');
  const panel = page.getByRole('complementary', { name: 'Demo accounts' });
  await expect(panel).toContainText(PASSWORD);
  for (const { email } of homes) await expect(panel.getByRole('button', { name: email })).toBeVisible();
  const principal = panel.getByRole('button', { name: /Principal · Alderquill Elementary/ });
  for (let i = 0; i < 30 && !(await principal.evaluate((el) => el === document.activeElement)); i++) await page.keyboard.press('Tab');
  await expect(principal).toBeFocused();
  await page.keyboard.press('Enter');
  await expect(page.getByLabel('E-mail address')).toHaveValue('principal1@evenhand.test');
  // Picking moves the focus to Sign in, so the next key signs in.
  await expect(page.getByRole('button', { name: 'Sign in' })).toBeFocused();
  await page.keyboard.press('Enter');
  await expect(page.getByRole('heading', { level: 1, name: 'My school' })).toBeVisible();
});

import { expect, test } from '@playwright/test';
import { DEMO_STUDY, expectAccessible, signIn } from './support';

// The chart pages load their code on first visit (src/app/router.tsx). A page opened before a release still names
// the older release's files, which the server no longer has: the person is asked to reload, and the reload works.
test('a page opened before a release asks for a reload when a chart page’s code is gone, and the reload opens the page', async ({ page }) => {
  await signIn(page, 'lead@evenhand.test');
  await page.getByRole('link', { name: DEMO_STUDY }).click();
  await expect(page.getByRole('navigation', { name: 'Study' })).toBeVisible();
  const gone = '**/assets/routes-*.js';
  await page.route(gone, (route) => route.fulfill({ status: 404, contentType: 'application/json', body: '{"error":{"code":"not_found","message":"No such file"}}' }));
  await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Checks' }).click();
  await expect(page.getByRole('heading', { level: 1, name: 'Evenhand needs a reload' })).toBeVisible();
  // The study's header and tabs stay, so the person knows where they are.
  await expect(page.getByRole('navigation', { name: 'Study' })).toBeVisible();
  await expectAccessible(page);

  await page.unroute(gone);
  await page.getByRole('button', { name: 'Reload the page' }).click();
  await expect(page).toHaveURL(/\/studies\/[0-9a-f-]+\/checks$/);
  await expect(page.getByRole('region', { name: 'Oral reading fluency (words correct per minute)', exact: true }).getByRole('heading', { name: 'Data quality' })).toBeVisible();
});

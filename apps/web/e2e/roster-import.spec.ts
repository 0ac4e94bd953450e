import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { expect, test, type Page } from '@playwright/test';
import { apiAs, expectAccessible, expectStatus, queryDatabase, signIn } from './support';

// The invented bundle the API tests use (apps/api/dev/oneroster-bundle.ts makes it): two demo schools, two classes of 12 each.
const BUNDLE = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../api/test/fixtures/oneroster-demo.zip');
// A study of this file's own, so the demo's draft study keeps its empty registry for the tour.
let title = '';

test.beforeAll(async ({ baseURL }) => {
  title = `Roster import ${Math.random().toString(36).slice(2, 7).toUpperCase()}`;
  const lead = await apiAs(baseURL!, 'lead@evenhand.test');
  await expectStatus(lead.post('/api/studies', { data: { title, intervention: 'Paired reading twice a week', comparisonCondition: 'Usual reading block', unitOfAssignment: 'classroom' } }));
  await lead.dispose();
});

async function openSites(page: Page) {
  await page.goto('/studies');
  await page.getByRole('link', { name: title }).click();
  await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Sites & classes' }).click();
}

async function previewBundle(page: Page) {
  await page.getByRole('button', { name: 'Import a OneRoster export' }).click();
  const dialog = page.getByRole('dialog', { name: 'Import a OneRoster export' });
  await dialog.getByLabel('Roster export').setInputFiles(BUNDLE);
  await dialog.getByRole('button', { name: 'Preview the roster' }).click();
  await expect(dialog.getByText('The export lists 2 schools, 4 classes and 48 students.')).toBeVisible();
  return dialog;
}

test.describe.serial('the coordinator enrols a study’s roster from a OneRoster export', () => {
  test.describe.configure({ timeout: 90_000 });

  test('at 390 px wide, the preview lists the schools and classes without names of students, and is accessible', async ({ page }) => {
    await page.setViewportSize({ width: 390, height: 844 });
    await signIn(page, 'coordinator@evenhand.test');
    await openSites(page);
    const dialog = await previewBundle(page);
    await expect(dialog.getByRole('group', { name: /Alderquill Elementary/ })).toBeVisible();
    await expect(dialog.getByText('Given1')).toHaveCount(0);
    await expectAccessible(page);
    await dialog.getByRole('button', { name: 'Choose other files' }).click();
  });

  test('previews, leaves one class out, imports the rest, and sees the classrooms and their student codes', async ({ page }) => {
    await signIn(page, 'coordinator@evenhand.test');
    await openSites(page);
    const dialog = await previewBundle(page);
    const brackenwold = dialog.getByRole('group', { name: /Brackenwold Middle School/ });
    await brackenwold.getByRole('row', { name: /Grade 4 Reading 2/ }).getByRole('checkbox').uncheck();
    await expectAccessible(page);
    await dialog.getByRole('button', { name: 'Import the chosen classes' }).click();
    // Four teachers and the principals are invited in the same request: allow a busy machine its time.
    await expect(dialog.getByText(/The roster is imported: 3 classrooms added, 36 students joined/)).toBeVisible({ timeout: 30_000 });
    await dialog.getByRole('button', { name: 'Close' }).click();

    await expect(page.getByRole('main').getByText('Grade 4 Reading 1').first()).toBeVisible();
    const [{ students }] = await queryDatabase<{ students: number }>(
      `SELECT count(*)::int AS students FROM students st JOIN studies s ON s.id = st.study_id WHERE s.title = $1 AND st.roster_link IS NOT NULL`,
      [title],
    );
    expect(students).toBe(36);
    await expectAccessible(page);
  });

  test('at 390 px wide, the list of imports says when, by whom and what the import changed, without scrolling sideways', async ({ page }) => {
    await page.setViewportSize({ width: 390, height: 844 });
    await signIn(page, 'coordinator@evenhand.test');
    await openSites(page);
    const entry = page.getByRole('region', { name: 'Roster imports' }).getByRole('listitem').first();
    await expect(entry).toContainText('by coordinator@evenhand.test');
    await expect(entry).toContainText('2 sites enrolled');
    await expect(entry).toContainText('3 classrooms added');
    await expect(entry).toContainText('36 students joined');
    await entry.scrollIntoViewIfNeeded();
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
    await expectAccessible(page);
  });
});

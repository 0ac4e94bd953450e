import { expect, test, type Page } from '@playwright/test';
import { DEMO_STUDY, acceptRoleInvitation, apiAs, expectAccessible, expectStatus, isoDay, queryDatabase, signIn } from './support';

/**
 * Phones and tablets: sign-in, My classes, the score sheet (typing, pasting a block, autosave, submit) and My school
 * at 390 × 844 and 768 × 1024, with no sideways scroll of the page (a table may scroll in its own frame) and no
 * serious accessibility finding.
 */

// Student codes are unique within a study, so each size's classroom has codes of its own.
const sizes = [
  { name: 'a phone', width: 390, height: 844, room: 'Room 21', codes: 'QP' },
  { name: 'a tablet', width: 768, height: 1024, room: 'Room 22', codes: 'QT' },
] as const;

/** The page itself never scrolls sideways. */
async function expectNoSidewaysScroll(page: Page) {
  const { scroll, view } = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, view: window.innerWidth }));
  expect(scroll, `the page is ${scroll}px wide in a ${view}px window`).toBeLessThanOrEqual(view);
}

let title = '';

/** A study of this file's own with a baseline wave open today and two of teacher1's classrooms, one per screen size. */
test.beforeAll(async ({ baseURL }) => {
  test.setTimeout(60_000);
  const lead = await apiAs(baseURL!, 'lead@evenhand.test');
  const coordinator = await apiAs(baseURL!, 'coordinator@evenhand.test');
  const suffix = Math.random().toString(36).slice(2, 7).toUpperCase();
  title = `Small screens ${suffix}`;
  const study = await expectStatus(lead.post('/api/studies', { data: { title, intervention: 'Paired reading twice a week', comparisonCondition: 'Usual reading block', unitOfAssignment: 'classroom' } }));
  const measure = await expectStatus(lead.post(`/api/studies/${study.id}/measures`, { data: { name: 'Words read correctly', minScore: 0, maxScore: 200, kind: 'achievement' } }));
  await expectStatus(lead.post(`/api/studies/${study.id}/waves`, { data: { kind: 'baseline', name: 'Pretest', opensOn: isoDay(-3), closesOn: isoDay(20) } }));
  const outcome = await expectStatus(lead.post(`/api/studies/${study.id}/waves`, { data: { kind: 'outcome', name: 'Posttest', opensOn: isoDay(120), closesOn: isoDay(150) } }));
  await expectStatus(
    lead.put(`/api/studies/${study.id}/plan`, {
      data: { primaryMeasureId: measure.id, primaryWaveId: outcome.id, hypothesis: 'Paired reading classrooms read more words correctly at the posttest.', plannedSites: 1, plannedClassrooms: 2, plannedStudentsPerClassroom: 20 },
    }),
    200,
  );
  await expectStatus(lead.post(`/api/studies/${study.id}/plan/seal`, { data: {} }), 200);
  const cohort = await expectStatus(coordinator.post(`/api/studies/${study.id}/cohorts`, { data: { name: 'Grade 3, this year' } }));
  const site = await expectStatus(coordinator.post(`/api/studies/${study.id}/sites`, { data: { name: `Quillhaven Pocket School ${suffix}`, code: `Q${suffix}` } }));
  for (const { room } of sizes) {
    await expectStatus(
      coordinator.post(`/api/studies/${study.id}/classrooms`, {
        data: { siteId: site.id, cohortId: cohort.id, name: room, grade: '3', expectedSize: 20, teacher: { email: 'teacher1@evenhand.test', name: 'Tomasz Thimblewick' } },
      }),
    );
  }
  await lead.dispose();
  await coordinator.dispose();
  await acceptRoleInvitation(baseURL!, 'teacher1@evenhand.test', `Quillhaven Pocket School ${suffix}`);
});

for (const size of sizes) {
  test.describe(`on ${size.name} (${size.width} × ${size.height})`, () => {
    test.use({ viewport: { width: size.width, height: size.height } });

    test('a teacher signs in, finds the class, types, pastes, saves and submits a score sheet without the page scrolling sideways', async ({ page }) => {
      test.setTimeout(240_000); // two sign-ins' worth of hashing, three axe scans and a lazy page on a busy machine
      await page.goto('/sign-in');
      await expect(page.getByLabel('E-mail address')).toBeVisible({ timeout: 30_000 });
      await expectNoSidewaysScroll(page);
      await expectAccessible(page);
      await signIn(page, 'teacher1@evenhand.test');

      await expect(page.getByRole('heading', { level: 1, name: 'My classes' })).toBeVisible({ timeout: 30_000 });
      await expectNoSidewaysScroll(page);
      await expectAccessible(page);
      if (size.width === 390) await page.screenshot({ path: test.info().outputPath('my-classes-390.png'), fullPage: true });

      const study = page.getByRole('region', { name: title });
      await study.getByRole('region', { name: new RegExp(size.room) }).getByRole('link', { name: /^Enter scores — Pretest/ }).click();
      await expect(page.getByRole('heading', { level: 1, name: `${size.room} · Pretest` })).toBeVisible({ timeout: 30_000 });
      await expectNoSidewaysScroll(page);

      // Typing, then a block pasted from a spreadsheet into the next row.
      await page.getByRole('textbox', { name: 'Student code, row 1' }).click();
      await page.keyboard.type(`${size.codes}-001`);
      await page.keyboard.press('Tab');
      await page.keyboard.type('50');
      await page.keyboard.press('Enter');
      await page.getByRole('textbox', { name: 'Student code, row 2' }).evaluate((el, codes) => {
        const data = new DataTransfer();
        data.setData('text/plain', `${codes}-002\t61\n${codes}-003\t72\n`);
        el.dispatchEvent(new ClipboardEvent('paste', { clipboardData: data, bubbles: true, cancelable: true }));
      }, size.codes);
      await expect(page.getByRole('textbox', { name: 'Student code, row 3' })).toHaveValue(`${size.codes}-003`);
      await expect(page.getByText(/Saved at \d/)).toBeVisible({ timeout: 20_000 });
      await expectNoSidewaysScroll(page);
      await expectAccessible(page);
      if (size.width === 390) await page.screenshot({ path: test.info().outputPath('score-sheet-390.png'), fullPage: true });

      await page.getByRole('button', { name: /^Submit/ }).first().click();
      await page.getByRole('dialog', { name: 'Submit this score sheet?' }).getByRole('button', { name: 'Submit to the coordinator' }).click();
      await expect(page.getByText(/This sheet was submitted on .* and is waiting for the coordinator/)).toBeVisible();
      await expectNoSidewaysScroll(page);
    });

    test('a principal reads My school without the page scrolling sideways', async ({ page }) => {
      test.setTimeout(60_000);
      await signIn(page, 'principal1@evenhand.test');
      await expect(page.getByRole('heading', { level: 1, name: 'My school' })).toBeVisible({ timeout: 30_000 });
      await expect(page.getByRole('main')).toContainText(DEMO_STUDY);
      await expectNoSidewaysScroll(page);
      await expectAccessible(page);
      if (size.width === 390) await page.screenshot({ path: test.info().outputPath('my-school-390.png'), fullPage: true });
    });

    test('the research lead reads the study report, its effect-size chart included, without the page scrolling sideways', async ({ page }) => {
      test.setTimeout(60_000);
      const [{ id }] = await queryDatabase<{ id: string }>(`SELECT id FROM studies WHERE title = $1`, [DEMO_STUDY]);
      await signIn(page, 'lead@evenhand.test');
      await page.goto(`/studies/${id}/report`);
      await expect(page.getByRole('heading', { name: 'Study report' })).toBeVisible({ timeout: 30_000 });
      await expect(page.getByText(/^Each dot is a comparison’s Hedges’ g/)).toBeVisible();
      await expectNoSidewaysScroll(page);
    });
  });
}

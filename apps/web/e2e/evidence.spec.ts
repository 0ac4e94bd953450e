import { expect, test, type Page } from '@playwright/test';
import type { StudyEvidence } from '@evenhand/entities';
import { DEMO_STUDY, expectAccessible, queryDatabase, signIn } from './support';

/**
 * "Will it count as evidence?": the report shows each pre-specified comparison's verdict with every reason, each
 * linking to the screen that shows its numbers; Checks say what puts the rating at risk; the Plan previews what the
 * design can reach at best, live as the numbers are typed; each says which attrition boundary applies and why. A
 * principal's My school carries only each locked result's one-sentence wording. Also at 390 px, without sideways
 * scroll, axe clean.
 */

const DRAFT_STUDY = 'Number Journal Prompts in grade 5';

async function studyIdOf(title: string): Promise<string> {
  const [study] = await queryDatabase<{ id: string }>(`SELECT id FROM studies WHERE title = $1`, [title]);
  return study.id;
}

/** Nothing inside `selector` reaches past the window's right edge (a table may scroll in its own frame); names the culprits. */
async function expectNoSidewaysScroll(page: Page, selector = 'body') {
  const wide = await page.evaluate((sel) => {
    const view = window.innerWidth;
    const inScroller = (el: Element) => {
      for (let p = el.parentElement; p; p = p.parentElement) if (['auto', 'scroll'].includes(getComputedStyle(p).overflowX)) return true;
      return false;
    };
    return [...document.querySelectorAll(`${sel} *`)]
      .filter((el) => el.getBoundingClientRect().right > view + 0.5 && !inScroller(el))
      .slice(0, 5)
      .map((el) => `${el.tagName.toLowerCase()}.${el.className} (${Math.round(el.getBoundingClientRect().right)}px): ${(el.textContent ?? '').slice(0, 60)}`);
  }, selector);
  expect(wide, 'elements wider than the window').toEqual([]);
}

test('the report shows each verdict with every reason, linking to the Checks and to the result', async ({ page }) => {
  test.setTimeout(120_000);
  await signIn(page, 'lead@evenhand.test');
  const studyId = await studyIdOf(DEMO_STUDY);
  const answer: StudyEvidence = await (await page.request.get(`/api/studies/${studyId}/evidence`)).json();
  expect(answer.comparisons.length).toBeGreaterThan(0);

  await page.goto(`/studies/${studyId}/report`);
  const section = page.getByRole('region', { name: 'Will it count as evidence?' });
  await expect(section).toBeVisible({ timeout: 30_000 });
  const verdicts = section.getByTestId('evidence-verdict');
  await expect(verdicts).toHaveCount(answer.comparisons.length);
  const first = answer.comparisons[0];
  const card = verdicts.first();
  // The same wording and every reason the API gives, in the same order, judged against the plan's boundary, saying why.
  await expect(card.getByText(first.verdict.wording)).toBeVisible();
  expect(first.boundary).toMatchObject({ boundary: answer.plan.boundary, chosenBy: 'plan' });
  await expect(card.getByTestId('evidence-boundary')).toHaveText(first.boundary.explanation);
  // The demo plan registers the cautious boundary (its seed), sealed in version 1 and kept by the amendment.
  expect(first.boundary.explanation).toMatch(/^Judged against the cautious attrition boundary, which plan version \d+ registers: the intervention could affect which students leave\.$/);
  await expect(card.locator('[data-reason]')).toHaveCount(first.verdict.reasons.length);
  for (const [i, r] of first.verdict.reasons.entries()) {
    const item = card.locator('[data-reason]').nth(i);
    await expect(item).toHaveAttribute('data-reason', r.id);
    await expect(item).toContainText(r.rule);
    await expect(item).toContainText(r.numbers);
  }
  // The demo's primary result is locked and classroom-assigned: attrition links to Checks, clustering to the result.
  expect(first.locked).toBe(true);
  const attrition = card.locator('[data-reason="cluster-attrition"]');
  await expect(attrition.getByRole('link', { name: 'See it on Checks' })).toHaveAttribute('href', `/studies/${studyId}/checks`);
  const clustering = card.locator('[data-reason="clustering"]');
  await expect(clustering.getByRole('link', { name: 'See it on the result' })).toHaveAttribute('href', `/studies/${studyId}/comparisons/runs/${first.runId}`);
  await card.getByText('What the evidence reviewers must still check').click();
  await expect(card.getByText(/over-aligned with the intervention/)).toBeVisible();
  await expectAccessible(page);

  await clustering.getByRole('link', { name: 'See it on the result' }).click();
  await expect(page).toHaveURL(new RegExp(`/runs/${first.runId}$`));
  await page.goBack();
  await attrition.getByRole('link', { name: 'See it on Checks' }).click();
  await expect(page).toHaveURL(new RegExp(`/studies/${studyId}/checks$`));
  const risks = page.getByTestId('evidence-risks');
  await expect(risks.getByText(first.verdict.wording).first()).toBeVisible({ timeout: 30_000 });
  await expect(risks.getByText('Its result is locked: nothing arriving now changes the verdict.').first()).toBeVisible();
  await expect(risks.getByLabel('Cautious: the intervention could affect which students leave (the plan’s)')).toBeChecked();
  // Judging by the optimistic boundary asks the API again; the screen says it is not the plan's.
  await risks.getByLabel('Optimistic: the intervention is unlikely to affect which students leave').check();
  const optimistic: StudyEvidence = await (await page.request.get(`/api/studies/${studyId}/evidence?boundary=optimistic`)).json();
  await expect(risks.getByText(optimistic.comparisons[0].verdict.wording).first()).toBeVisible();
  await expect(risks.getByTestId('evidence-boundary').first()).toHaveText(optimistic.comparisons[0].boundary.explanation);
  expect(optimistic.comparisons[0].boundary.explanation).toContain('as asked here');
  await expectAccessible(page);
});

test('the plan previews what the design can reach at best, live as the numbers change', async ({ page }) => {
  test.setTimeout(120_000);
  await signIn(page, 'lead@evenhand.test');
  const studyId = await studyIdOf(DRAFT_STUDY);
  await page.goto(`/studies/${studyId}/plan`);
  await page.getByLabel('Planned sites').fill('4', { timeout: 30_000 });
  await page.getByLabel('Planned classrooms').fill('24');
  await page.getByLabel('Planned students per classroom').fill('25');
  const preview = page.getByTestId('evidence-preview');
  // 24 classrooms of 25 in 4 schools, randomised: without reservations; 600 students, 4 sites: strong (packages/stats evidence tests).
  await expect(preview).toContainText('would meet the evidence standards without reservations');
  await expect(preview).toContainText('strong evidence');
  // One school only: not multi-site, so promising at most.
  await page.getByLabel('Planned sites').fill('1');
  await expect(preview).toContainText('promising evidence');
  await expect(preview).toContainText('One site: promising at most.');
  await expectAccessible(page);
});

test('at 390 px the report’s verdicts, the Checks’ risks and the plan preview fit without sideways scroll', async ({ browser }) => {
  test.setTimeout(120_000);
  const context = await browser.newContext({ viewport: { width: 390, height: 844 } });
  const page = await context.newPage();
  await signIn(page, 'lead@evenhand.test');
  const studyId = await studyIdOf(DEMO_STUDY);
  await page.goto(`/studies/${studyId}/report`);
  await expect(page.getByRole('region', { name: 'Will it count as evidence?' }).getByTestId('evidence-verdict').first()).toBeVisible({ timeout: 30_000 });
  await expectNoSidewaysScroll(page, '#report-evidence + *');
  await expectAccessible(page);
  await page.goto(`/studies/${studyId}/checks`);
  await expect(page.getByTestId('evidence-risks').getByRole('heading', { name: 'Will it count as evidence?' })).toBeVisible({ timeout: 30_000 });
  await expectNoSidewaysScroll(page);
  await page.goto(`/studies/${await studyIdOf(DRAFT_STUDY)}/plan`);
  await page.getByLabel('Planned sites').fill('2', { timeout: 30_000 });
  await page.getByLabel('Planned classrooms').fill('8');
  await page.getByLabel('Planned students per classroom').fill('20');
  await expect(page.getByTestId('evidence-preview')).toContainText('promising evidence');
  await expectNoSidewaysScroll(page);
  await expectAccessible(page);
  await context.close();
});

test('My school shows each locked result’s evidence wording, the report’s headline for it, also at 390 px', async ({ browser }) => {
  test.setTimeout(120_000);
  const studyId = await studyIdOf(DEMO_STUDY);
  const lead = await browser.newPage();
  await signIn(lead, 'lead@evenhand.test');
  const answer: StudyEvidence = await (await lead.request.get(`/api/studies/${studyId}/evidence`)).json();
  await lead.close();
  const locked = answer.comparisons.filter((c) => c.locked);
  expect(locked.length).toBeGreaterThan(0);
  for (const width of [390, 1280]) {
    const context = await browser.newContext({ viewport: { width, height: 900 } });
    const page = await context.newPage();
    await signIn(page, 'principal1@evenhand.test');
    await expect(page.getByRole('heading', { level: 1, name: 'My school' })).toBeVisible({ timeout: 30_000 });
    const wordings = page.getByRole('main').getByTestId('evidence-wording');
    await expect(wordings).toHaveCount(locked.length);
    // One sentence per locked result, the same words the report gives, and nothing else of the verdict (no counts).
    expect((await wordings.allTextContents()).sort()).toEqual(locked.map((c) => c.verdict.wording).sort());
    for (const text of await wordings.allTextContents()) expect(text).not.toMatch(/\d/);
    await expect(page.getByRole('main').getByTestId('evidence-verdict')).toHaveCount(0);
    await expectNoSidewaysScroll(page);
    await expectAccessible(page);
    await context.close();
  }
  // The principal's lock digest of this database carries the same sentences.
  const [digest] = await queryDatabase<{ text: string }>(
    `SELECT d.text FROM digests d WHERE d.study_id = $1 AND d.kind = 'lock' AND d.recipient_email = 'principal1@evenhand.test' ORDER BY d.created_at DESC LIMIT 1`,
    [studyId],
  );
  for (const c of locked) expect(digest.text.replace(/\s+/g, ' ')).toContain(c.verdict.wording);
});

import { expect, test, type Page } from '@playwright/test';
import { DEMO_STUDY, acceptRoleInvitation, apiAs, demoWaveName, expectAccessible, expectStatus, isoDay, signIn } from './support';

const MAILDEV = process.env.MAILDEV_URL ?? 'http://127.0.0.1:1080';

async function signOut(page: Page) {
  await page.getByRole('button', { name: 'Sign out' }).click();
  await expect(page.getByRole('button', { name: 'Sign in' })).toBeVisible();
}

interface OwnStudy {
  id: string;
  title: string;
}

/** A study of this file's own, with a baseline wave open today and teacher1's classroom in it. */
async function createOpenStudy(baseURL: string): Promise<OwnStudy> {
  const lead = await apiAs(baseURL, 'lead@evenhand.test');
  const coordinator = await apiAs(baseURL, 'coordinator@evenhand.test');
  const suffix = Math.random().toString(36).slice(2, 7).toUpperCase();
  const title = `Score sheet journeys ${suffix}`;
  const study = await expectStatus(
    lead.post('/api/studies', {
      data: { title, intervention: 'Paired reading twice a week', comparisonCondition: 'Business-as-usual reading block', unitOfAssignment: 'classroom' },
    }),
  );
  const measure = await expectStatus(lead.post(`/api/studies/${study.id}/measures`, { data: { name: 'Words read correctly', minScore: 0, maxScore: 200, kind: 'achievement' } }));
  await expectStatus(lead.post(`/api/studies/${study.id}/waves`, { data: { kind: 'baseline', name: 'Pretest', opensOn: isoDay(-5), closesOn: isoDay(20) } }));
  const outcome = await expectStatus(lead.post(`/api/studies/${study.id}/waves`, { data: { kind: 'outcome', name: 'Posttest', opensOn: isoDay(120), closesOn: isoDay(150) } }));
  await expectStatus(
    lead.put(`/api/studies/${study.id}/plan`, {
      data: {
        primaryMeasureId: measure.id,
        primaryWaveId: outcome.id,
        hypothesis: 'Classrooms with paired reading read more words correctly at the posttest than business-as-usual classrooms.',
        plannedSites: 1,
        plannedClassrooms: 2,
        plannedStudentsPerClassroom: 20,
      },
    }),
    200,
  );
  await expectStatus(lead.post(`/api/studies/${study.id}/plan/seal`, { data: {} }), 200);
  const cohort = await expectStatus(coordinator.post(`/api/studies/${study.id}/cohorts`, { data: { name: 'Grade 3, this year' } }));
  const site = await expectStatus(coordinator.post(`/api/studies/${study.id}/sites`, { data: { name: `Juniper Lane ${suffix}`, code: `J${suffix}` } }));
  await expectStatus(
    coordinator.post(`/api/studies/${study.id}/classrooms`, {
      data: { siteId: site.id, cohortId: cohort.id, name: 'Room 12', grade: '3', expectedSize: 20, teacher: { email: 'teacher1@evenhand.test', name: 'Tomasz Thimblewick' } },
    }),
  );
  await lead.dispose();
  await coordinator.dispose();
  await acceptRoleInvitation(baseURL, 'teacher1@evenhand.test', `Juniper Lane ${suffix}`);
  return { id: study.id, title };
}

let own: OwnStudy;

test.beforeAll(async ({ baseURL }) => {
  test.setTimeout(60_000);
  own = await createOpenStudy(baseURL!);
});

test('a teacher fixes the sheet the coordinator returned and resubmits it; the coordinator accepts it from the matrix', async ({ page }) => {
  test.setTimeout(90_000); // two sign-ins and three accessibility scans
  await signIn(page, 'teacher1@evenhand.test');
  await expect(page.getByRole('heading', { level: 1, name: 'My classes', exact: true })).toBeVisible();
  const demo = page.getByRole('region', { name: DEMO_STUDY });
  const room3b = demo.getByRole('region', { name: /Room 3B/ });
  await expect(room3b.getByText(/Returned: LV-\d{4} reads 12 words per minute at the follow-up/)).toBeVisible();
  await expectAccessible(page);

  const reason = await room3b.getByText(/Returned: LV-\d{4}/).textContent();
  const code = /LV-\d{4}/.exec(reason ?? '')![0];

  await room3b.getByRole('link', { name: /Fix and resubmit/ }).click();
  await expect(page.getByRole('heading', { name: 'Returned by the coordinator' })).toBeVisible();
  const flagged = page.getByRole('row').filter({ has: page.getByRole('rowheader', { name: /named in the coordinator’s reasons/ }) });
  await expect(flagged).toHaveCount(1);
  await expect(flagged.getByRole('textbox', { name: /^Student code, row/ })).toHaveValue(code);
  const score = flagged.getByRole('textbox', { name: /^Score, row/ });
  await expect(score).toHaveValue('12');
  await expectAccessible(page);

  await score.fill('96');
  await expect(page.getByText(/Saved at \d/)).toBeVisible();
  await page.getByRole('button', { name: 'Submit again' }).click();
  const confirm = page.getByRole('dialog', { name: 'Submit this score sheet?' });
  await confirm.getByRole('button', { name: 'Submit to the coordinator' }).click();
  await expect(page.getByText(/This sheet was submitted on .* and is waiting for the coordinator/)).toBeVisible();
  await expect(page.getByRole('row', { name: `${code} 96 No` })).toBeVisible();
  await signOut(page);

  await signIn(page, 'coordinator@evenhand.test');
  await page.getByRole('link', { name: DEMO_STUDY }).click();
  await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Score sheets' }).click();
  await expect(page.getByRole('heading', { name: 'Score sheets', level: 2 })).toBeVisible();
  await page.getByLabel('School').selectOption({ label: 'Alderquill Elementary' });
  await page.getByLabel('State').selectOption({ label: 'Submitted' });
  await expectAccessible(page);
  // The seed returned this sheet in the follow-up wave, after the result was locked.
  const followUp = await demoWaveName('follow-up');
  await page.getByRole('link', { name: new RegExp(`^Room 3B, ${followUp}, Oral reading fluency.*: Submitted`) }).click();
  await expect(page.getByRole('heading', { name: `Room 3B · ${followUp}` })).toBeVisible();
  const sheetPath = new URL(page.url()).pathname;
  await page.getByRole('button', { name: 'Accept' }).click();
  await expect(page.getByText("Accepted. Room 3B's sheet is now read-only.")).toBeVisible();
  await page.getByRole('link', { name: 'All score sheets' }).click();
  await page.getByLabel('School').selectOption({ label: 'Alderquill Elementary' });
  await expect(page.locator(`a[href="${sheetPath}"]`)).toHaveAccessibleName(new RegExp(`^Room 3B, ${followUp}, Oral reading fluency.*: Accepted`));
});

test('a CSV with one bad row is refused with its line number and changes nothing; a good one replaces the rows after a preview', async ({ page }) => {
  test.setTimeout(60_000);
  await signIn(page, 'teacher1@evenhand.test');
  const study = page.getByRole('region', { name: own.title });
  await study.getByRole('link', { name: /^Enter scores — Pretest/ }).click();
  await expect(page.getByRole('heading', { level: 1, name: 'Room 12 · Pretest' })).toBeVisible();

  await page.getByRole('textbox', { name: 'Student code, row 1' }).click();
  await page.keyboard.type('JL-001');
  await page.keyboard.press('Tab');
  await page.keyboard.type('50');
  await page.keyboard.press('Enter');
  await page.keyboard.type('JL-002');
  await page.keyboard.press('Tab');
  await page.keyboard.type('60');
  await expect(page.getByText(/Saved at \d/)).toBeVisible();
  await expectAccessible(page);

  await page.getByLabel('CSV file', { exact: true }).setInputFiles({
    name: 'pretest.csv',
    mimeType: 'text/csv',
    buffer: Buffer.from('student_code;score;left\r\nJL-001;55;no\r\nJL-002;999;no\r\nJL-003;70;no\r\n'),
  });
  await expect(page.getByText('pretest.csv was not used; the sheet has not changed')).toBeVisible();
  const problems = page.getByRole('table', { name: 'Problems in pretest.csv, by line' });
  await expect(problems.getByRole('row', { name: /^3 score The score 999 is outside the measure's range 0–200$/ })).toBeVisible();
  await expect(page.getByRole('textbox', { name: 'Score, row 2' })).toHaveValue('60');
  const sheetId = new URL(page.url()).pathname.split('/').pop();
  const unchanged = await (await page.request.get(`/api/score-sheets/${sheetId}`)).json();
  expect(unchanged.rows.map((r: { studentCode: string; score: number }) => [r.studentCode, r.score])).toEqual([
    ['JL-001', 50],
    ['JL-002', 60],
  ]);

  await page.getByRole('button', { name: 'Choose another file' }).click();
  await page.getByLabel('CSV file', { exact: true }).setInputFiles({
    name: 'pretest.csv',
    mimeType: 'text/csv',
    buffer: Buffer.from('\uFEFFstudent_code,score,left,note\r\nJL-001,55,no,\r\nJL-002,61,no,\r\nJL-003,,yes,moved away\r\n'),
  });
  await expect(page.getByText('pretest.csv is ready: 3 rows, no problems found')).toBeVisible();
  await page.getByRole('button', { name: 'Replace the sheet with these 3 rows' }).click();
  await page.getByRole('dialog', { name: 'Replace the rows on this sheet?' }).getByRole('button', { name: 'Replace the rows' }).click();
  await expect(page.getByText("The sheet now holds the file's rows")).toBeVisible();
  await expect(page.getByRole('textbox', { name: 'Student code, row 3' })).toHaveValue('JL-003');
  await expect(page.getByRole('checkbox', { name: 'Left the study, row 3' })).toBeChecked();
});

test('the coordinator sends reminders, and the teacher receives one listing the missing sheet', async ({ page }) => {
  await signIn(page, 'coordinator@evenhand.test');
  await page.goto(`/studies/${own.id}/score-sheets`);
  await expect(page.getByRole('link', { name: /^Room 12, Pretest, Words read correctly: Open/ })).toBeVisible();
  await expect(page.getByRole('link', { name: /^Room 12, Posttest, Words read correctly: Not due yet/ })).toBeVisible();
  await page.getByRole('button', { name: 'Send reminders' }).click();
  await page.getByRole('dialog', { name: 'Send reminders to teachers' }).getByRole('button', { name: 'Send the reminders' }).click();
  await expect(page.getByText('Reminded 1 teacher about 1 sheet.')).toBeVisible();

  await expect
    .poll(async () => {
      const all = (await (await page.request.get(`${MAILDEV}/api/email`)).json()) as { subject: string; text: string; to: { address: string }[] }[];
      return all.find((m) => m.subject === `Score sheets waiting: ${own.title}` && m.to.some((t) => t.address === 'teacher1@evenhand.test'))?.text;
    })
    .toContain('Room 12');
});

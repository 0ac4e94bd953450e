import { expect, request as playwrightRequest, test, type Page } from '@playwright/test';
import { expectAccessible } from './support';

const PASSWORD = 'evenhand-demo';
const DEMO_STUDY = 'Lantern Reading Routine in grades 3 and 4';
const MAILDEV = process.env.MAILDEV_URL ?? 'http://127.0.0.1:1080';

async function signIn(page: Page, email: string, password = PASSWORD) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page).not.toHaveURL(/\/sign-in/);
}

interface MaildevEmail {
  subject: string;
  to: { address: string }[];
  text?: string;
  html?: string;
}

/** The set-password link of the newest e-mail to this address, waiting for it to arrive. */
async function invitationLink(address: string): Promise<URL> {
  const mail = await playwrightRequest.newContext();
  let link: string | undefined;
  await expect
    .poll(
      async () => {
        const emails = (await (await mail.get(`${MAILDEV}/api/email`)).json()) as MaildevEmail[];
        const mine = emails.filter((e) => e.to.some((t) => t.address.toLowerCase() === address));
        const body = mine.at(-1) ? `${mine.at(-1)!.text ?? ''} ${mine.at(-1)!.html ?? ''}` : '';
        link = body.match(/https?:\/\/[^\s"'<>]+\/set-password\?token=[^\s"'<>&]+/)?.[0];
        return link;
      },
      { message: `an invitation to ${address}`, timeout: 15_000 },
    )
    .toBeTruthy();
  await mail.dispose();
  return new URL(link!);
}

const suffix = Math.random().toString(36).slice(2, 7).toUpperCase();
const title = `Registry journey ${suffix}`;
const siteCode = `RJ-${suffix}`;
const teacherEmail = `new.teacher.${suffix.toLowerCase()}@example.org`;
let studyPath = '';

test.describe.serial('a study from its start to its draw', () => {
  // Whole journeys through several screens, each with its own sign-in.
  test.describe.configure({ timeout: 90_000 });

  test('the research lead starts a study, adds its measure and waves, seals the plan and amends it', async ({ page }) => {
    await signIn(page, 'lead@evenhand.test');
    await expect(page.getByRole('heading', { level: 1, name: 'Studies' })).toBeVisible();
    await page.getByRole('button', { name: 'Start a study' }).click();
    const start = page.getByRole('dialog', { name: 'Start a study' });
    await start.getByLabel('Title').fill(title);
    await start.getByLabel('The intervention').fill('Ten minutes of paired rereading at the start of each literacy block.');
    await start.getByLabel('The comparison condition').fill('The usual literacy block of the same length.');
    await start.getByRole('button', { name: 'Start the study' }).click();

    await expect(page.getByRole('heading', { level: 1, name: title })).toBeVisible();
    await expect(page).toHaveURL(/\/studies\/[0-9a-f-]{36}\/overview$/);
    studyPath = new URL(page.url()).pathname.replace(/\/overview$/, '');
    await expect(page.getByRole('link', { name: 'Seal the plan' })).toBeVisible();

    await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Plan' }).click();
    const measure = page.getByRole('form', { name: 'Add a measure' });
    await measure.getByLabel('Measure name').fill('Words read correctly per minute');
    await measure.getByLabel('Lowest possible score').fill('0');
    await measure.getByLabel('Highest possible score').fill('200');
    await measure.getByRole('button', { name: 'Add the measure' }).click();
    await expect(page.getByRole('rowheader', { name: 'Words read correctly per minute' })).toBeVisible();

    const wave = page.getByRole('form', { name: 'Add a wave' });
    await expect(wave.getByLabel('Wave kind')).toHaveValue('baseline');
    await wave.getByLabel('Wave name').fill('Autumn pretest');
    await wave.getByLabel('Opens on').fill('2026-09-14');
    await wave.getByLabel('Closes on').fill('2026-10-09');
    await wave.getByRole('button', { name: 'Add the wave' }).click();
    await expect(page.getByRole('rowheader', { name: 'Autumn pretest' })).toBeVisible();
    await expect(wave.getByLabel('Wave kind')).toHaveValue('outcome');
    await wave.getByLabel('Wave name').fill('Spring posttest');
    await wave.getByLabel('Opens on').fill('2027-04-26');
    await wave.getByLabel('Closes on').fill('2027-05-21');
    await wave.getByRole('button', { name: 'Add the wave' }).click();
    await expect(page.getByRole('rowheader', { name: 'Spring posttest' })).toBeVisible();

    const plan = page.getByRole('form', { name: 'Plan' });
    await plan.getByLabel('Primary measure').selectOption({ label: 'Words read correctly per minute' });
    await plan.getByLabel('Primary wave').selectOption({ label: 'Spring posttest' });
    await plan.getByLabel('Hypothesis').fill('Classrooms with paired rereading read more words correctly per minute in spring.');
    await plan.getByLabel('Planned sites').fill('1');
    await plan.getByLabel('Planned classrooms').fill('4');
    await plan.getByLabel('Planned students per classroom').fill('20');
    const mdes = page.getByTestId('planning-mdes');
    await expect(mdes).toHaveText(/\d\.\d\d SD/);
    const atFour = await mdes.textContent();
    await plan.getByLabel('Planned classrooms').fill('40');
    await expect(mdes).not.toHaveText(atFour!);
    await plan.getByLabel('Planned classrooms').fill('4');
    await plan.getByRole('button', { name: 'Save draft' }).click();
    await expect(page.getByText(/Draft saved at/)).toBeVisible();

    await plan.getByRole('button', { name: 'Seal the plan…' }).click();
    const seal = page.getByRole('dialog', { name: 'Seal the plan?' });
    await expect(seal).toContainText('It is final');
    await seal.getByRole('button', { name: 'Seal the plan' }).click();
    await expect(page.getByRole('heading', { name: 'The plan in force: version 1' })).toBeVisible();
    await expect(page.getByText('SHA-256 of its canonical JSON')).toBeVisible();

    await page.getByRole('button', { name: 'Amend the plan' }).click();
    const amendment = page.getByRole('form', { name: 'Amendment' });
    await amendment.getByLabel('Reason for the amendment').fill('The district board asked for a larger smallest effect of interest, 0.30 SD.');
    await amendment.getByLabel('Smallest effect of interest (SD)').fill('0.3');
    await amendment.getByRole('button', { name: 'File the amendment' }).click();

    await expect(page.getByRole('heading', { name: 'The plan in force: version 2' })).toBeVisible();
    const diff = page.getByRole('table', { name: 'What version 2 changed' });
    await expect(diff.getByRole('row')).toHaveCount(2);
    await expect(diff.getByRole('row').nth(1)).toContainText('Smallest effect of interest (SD)');
    await expect(diff.getByRole('row').nth(1)).toContainText('0.25');
    await expect(diff.getByRole('row').nth(1)).toContainText('0.3');
    await expect(page.getByText('The district board asked for a larger smallest effect of interest, 0.30 SD.')).toBeVisible();
  });

  test('the coordinator enrols a new site and adds classrooms by form and by CSV, seeing the refused rows first', async ({ page }) => {
    await signIn(page, 'coordinator@evenhand.test');
    await page.goto(`${studyPath}/sites`);
    await page.getByRole('button', { name: 'Enrol a site' }).click();
    const enrol = page.getByRole('dialog', { name: 'Enrol a site' });
    await enrol.getByLabel('A new school').check();
    await enrol.getByLabel('School name').fill(`Juniper Lane ${suffix}`);
    await enrol.getByLabel('Site code').fill(siteCode);
    await enrol.getByRole('button', { name: 'Enrol the school' }).click();
    await expect(page.getByText(`Juniper Lane ${suffix} is enrolled.`)).toBeVisible();

    await page.getByLabel('New cohort').fill('Grade 4, 2026–27');
    await page.getByRole('button', { name: 'Add the cohort' }).click();
    await expect(page.getByText('Cohort Grade 4, 2026–27 is added.')).toBeVisible();

    await page.getByRole('button', { name: 'Add a classroom' }).click();
    const add = page.getByRole('dialog', { name: 'Add a classroom' });
    await add.getByLabel('Classroom name').fill('Room 1');
    await add.getByLabel('Grade').fill('4');
    await add.getByLabel('Expected size').fill('21');
    await add.getByLabel('Teacher’s name').fill('Noor Vasquez');
    await add.getByLabel('Teacher’s e-mail address').fill(teacherEmail);
    await add.getByRole('button', { name: 'Add the classroom' }).click();
    await expect(page.getByText(`Room 1 at Juniper Lane ${suffix} is added; Noor Vasquez is invited by e-mail.`)).toBeVisible();

    const header = 'site_code,cohort,classroom,grade,expected_size,teacher_email,teacher_name';
    await page.getByRole('button', { name: 'Add from a CSV file' }).click();
    const csv = page.getByRole('dialog', { name: 'Add classrooms from a CSV file' });
    await csv.getByLabel('CSV file').setInputFiles({
      name: 'classrooms.csv',
      mimeType: 'text/csv',
      buffer: Buffer.from(`${header}\nNO-SUCH-SITE,Grade 4,Room 2,4,twenty,second.${suffix.toLowerCase()}@example.org,Ari Lund\n`),
    });
    await csv.getByRole('button', { name: 'Check and add the classrooms' }).click();
    const problems = csv.getByRole('table', { name: /problems? in the file/ });
    await expect(problems).toBeVisible();
    await expect(problems.getByRole('row').nth(1)).toContainText('2');
    await expect(problems).toContainText('expected_size');

    await csv.getByLabel('CSV file').setInputFiles({
      name: 'classrooms.csv',
      mimeType: 'text/csv',
      buffer: Buffer.from(`${header}\n${siteCode},Grade 4,Room 2,4,20,second.${suffix.toLowerCase()}@example.org,Ari Lund\n`),
    });
    await csv.getByRole('button', { name: 'Check and add the classrooms' }).click();
    await expect(csv.getByText('1 classroom is added')).toBeVisible();
    await csv.getByRole('button', { name: 'Close' }).click();
    await expect(page.getByRole('table', { name: 'Classrooms' }).getByRole('row')).toHaveCount(3);
  });

  test('the coordinator previews, commits and verifies the draw', async ({ page }) => {
    await signIn(page, 'coordinator@evenhand.test');
    await page.goto(`${studyPath}/draw`);
    await page.getByLabel('Seed').fill(`registry-${suffix}`);
    await page.getByRole('button', { name: 'Preview the draw' }).click();
    await expect(page.getByText('Preview: nothing is stored yet')).toBeVisible();
    const balance = page.getByRole('table', { name: /Balance/ });
    await expect(balance.getByRole('row', { name: /All sites/ })).toContainText('1');

    await page.getByRole('button', { name: 'Commit this draw…' }).click();
    const commit = page.getByRole('dialog', { name: 'Commit the draw?' });
    await expect(commit).toContainText('immutable');
    await commit.getByRole('button', { name: 'Commit the draw' }).click();

    await expect(page.getByRole('heading', { name: 'The committed draw' })).toBeVisible();
    await expect(page.getByText(`registry-${suffix}`)).toBeVisible();
    await expect(page.getByText('blocked-fisher-yates, version 1')).toBeVisible();
    await page.getByRole('button', { name: 'Verify the draw' }).click();
    await expect(page.getByText('The draw is what its seed gives')).toBeVisible();
    await expect(page.getByText('Re-derived from the seed by Evenhand’s server: identical.')).toBeVisible();
    await expect(page.getByText('Re-derived in your browser from the seed: identical, all 2 units in the same arm.')).toBeVisible();
    await expect(page.getByText('Draw committed')).toBeVisible();
  });

  test('the invited teacher sets a password from the e-mail and sees only that classroom in My classes', async ({ page, baseURL }) => {
    const link = await invitationLink(teacherEmail);
    await page.goto(`${baseURL}${link.pathname}${link.search}`);
    await page.getByLabel('New password', { exact: true }).fill('a long new teacher password');
    await page.getByLabel('Repeat the new password').fill('a long new teacher password');
    await page.getByRole('button', { name: 'Save the password' }).click();
    await page.getByRole('link', { name: 'Go to sign in' }).click();

    await signIn(page, teacherEmail, 'a long new teacher password');
    await expect(page.getByRole('heading', { level: 1, name: 'My classes' })).toBeVisible();
    await expect(page.getByRole('heading', { level: 2, name: title })).toBeVisible();
    const classrooms = page.getByRole('heading', { level: 3 });
    await expect(classrooms).toHaveCount(1);
    await expect(classrooms).toContainText('Room 1');
    const api = await page.request.get(`/api${studyPath}/classrooms`);
    expect((await api.json()).items.map((c: { name: string }) => c.name)).toEqual(['Room 1']);
  });

  test('the coordinator moves a classroom to the other arm with a reason; the draw lists the move and the study turns quasi-experimental', async ({ page }) => {
    await signIn(page, 'coordinator@evenhand.test');
    await page.goto(`${studyPath}/draw`);
    await expect(page.getByText('No classroom has been moved by hand: the study follows the random draw.')).toBeVisible();
    const form = page.getByRole('form', { name: 'Reassign a classroom' });
    const room = await form.getByRole('option', { name: /^Room 1, / }).getAttribute('value');
    await form.getByLabel('Classroom', { exact: true }).selectOption(room!);
    const reason = 'The teacher of Room 1 moved to a school that runs the programme everywhere.';
    await form.getByLabel('Reason').fill(reason);
    await form.getByRole('button', { name: 'Reassign the classroom' }).click();
    await expect(form.getByText(/^Room 1 is now in the (intervention|comparison) arm\. The study is marked quasi-experimental\.$/)).toBeVisible();
    await expect(page.getByRole('table', { name: 'Reassignments' }).getByRole('row', { name: new RegExp(reason) })).toBeVisible();
    const study = await page.request.get(`/api${studyPath}`);
    expect((await study.json()).quasiExperimental).toBe(true);
  });
});

test.describe('the registry screens of the demo study are accessible', () => {
  // Each axe scan of a long page takes seconds.
  test.describe.configure({ timeout: 90_000 });

  async function openDemoStudy(page: Page) {
    await page.goto('/studies');
    await page.getByRole('link', { name: DEMO_STUDY }).click();
    await expect(page.getByRole('heading', { level: 1, name: DEMO_STUDY })).toBeVisible();
  }

  test('for the research lead: Studies, Overview and Plan with the amendment form open', async ({ page }) => {
    await signIn(page, 'lead@evenhand.test');
    await page.goto('/studies');
    await expect(page.getByRole('link', { name: DEMO_STUDY })).toBeVisible();
    await expectAccessible(page);
    await openDemoStudy(page);
    await expect(page.getByRole('heading', { name: 'Next steps for you' })).toBeVisible();
    await expectAccessible(page);
    await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Plan' }).click();
    await expect(page.getByRole('heading', { name: 'Version history' })).toBeVisible();
    await expect(page.getByRole('table', { name: 'What version 2 changed' })).toContainText('Assumed ICC');
    await expectAccessible(page);
    await page.getByRole('button', { name: 'Amend the plan' }).click();
    await expect(page.getByRole('form', { name: 'Amendment' })).toBeVisible();
    await expectAccessible(page);
  });

  test('for the coordinator: Sites & classes and Draw', async ({ page }) => {
    await signIn(page, 'coordinator@evenhand.test');
    await openDemoStudy(page);
    await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Sites & classes' }).click();
    await expect(page.getByRole('table', { name: 'Enrolled sites' })).toContainText('Alderquill Elementary');
    await expectAccessible(page);
    await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Draw' }).click();
    await expect(page.getByText('larkspur-valley-2025')).toBeVisible();
    await page.getByRole('button', { name: 'Verify the draw' }).click();
    await expect(page.getByText('The draw is what its seed gives')).toBeVisible();
    await expectAccessible(page);
  });

  test('a reviewer reads the sealed plan and the draw without any form to change them', async ({ page }) => {
    await signIn(page, 'reviewer@evenhand.test');
    await openDemoStudy(page);
    const tabs = page.getByRole('navigation', { name: 'Study' }).getByRole('link');
    await expect(tabs).toHaveText(['Overview', 'Plan', 'Sites & classes', 'Draw', 'Checks', 'Comparisons', 'Audit']);
    await tabs.filter({ hasText: 'Plan' }).click();
    await expect(page.getByRole('heading', { name: 'The plan in force: version 2' })).toBeVisible();
    await expect(page.getByRole('button', { name: 'Amend the plan' })).toHaveCount(0);
    await expect(page.getByRole('form')).toHaveCount(0);
    await tabs.filter({ hasText: 'Draw' }).click();
    await expect(page.getByRole('heading', { name: 'The committed draw' })).toBeVisible();
    await expect(page.getByRole('form', { name: 'Reassign a classroom' })).toHaveCount(0);
    await expectAccessible(page);
  });
});

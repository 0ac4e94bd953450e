import { createHash } from 'node:crypto';
import { readFile } from 'node:fs/promises';
import { twoLevelFromRows, welchT } from '@evenhand/stats';
import { expect, test, type Page } from '@playwright/test';
import { formatCount, formatPercent } from '../src/lib/format';
import { expectAccessible } from './support';

const PASSWORD = 'evenhand-demo';
const DEMO_STUDY = 'Lantern Reading Routine in grades 3 and 4';

async function signIn(page: Page, email: string) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { level: 1, name: 'Studies' })).toBeVisible();
}

async function openDemoStudyTab(page: Page, tab: 'Checks' | 'Comparisons'): Promise<string> {
  await page.getByRole('link', { name: DEMO_STUDY }).click();
  await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: tab }).click();
  await expect(page).toHaveURL(new RegExp(`/studies/[0-9a-f-]+/${tab.toLowerCase()}$`));
  return page.url().split('/studies/')[1].split('/')[0];
}

/** The page's rounding: two decimals and a true minus sign (lib/format.ts, formatNumber). */
function shown(x: number): string {
  const text = Math.abs(x).toFixed(2);
  return x < 0 && Number(text) !== 0 ? `\u2212${text}` : text;
}

async function csrfHeader(page: Page): Promise<Record<string, string>> {
  const cookie = (await page.context().cookies()).find((c) => c.name === 'evenhand_csrf');
  return { 'X-CSRF-Token': cookie?.value ?? '' };
}

test('the research lead reads the Checks: data quality, attrition against both boundaries, baseline equivalence and box plots', async ({ page }) => {
  await signIn(page, 'lead@evenhand.test');
  await openDemoStudyTab(page, 'Checks');
  const measure = page.getByRole('region', { name: 'Oral reading fluency (words correct per minute)', exact: true });
  await expect(measure.getByRole('heading', { name: 'Data quality' })).toBeVisible();
  await expect(measure.getByRole('table', { name: /Score sheets and scores by wave/ })).toBeVisible();
  await expect(measure.getByRole('heading', { name: 'Students', level: 4 })).toBeVisible();
  await expect(measure.getByRole('row', { name: /Cautious boundary/ }).first()).toBeVisible();
  await expect(measure.getByRole('row', { name: /Optimistic boundary/ }).first()).toBeVisible();
  await expect(measure.getByText(/Hedges’ g = −?\d\.\d\d/).first()).toBeVisible();
  await expect(measure.getByRole('img', { name: /Box plots of Oral reading fluency/ }).first()).toBeVisible();
  await expectAccessible(page);
});

test('the research lead runs the primary comparison, reads its result, locks or re-analyses it, exports it and prints the report', async ({ page }) => {
  test.setTimeout(150_000);
  await signIn(page, 'lead@evenhand.test');
  const studyId = await openDemoStudyTab(page, 'Comparisons');
  await expectAccessible(page);

  const comparisons = await (await page.request.get(`/api/studies/${studyId}/comparisons`)).json();
  const primary = comparisons.items.find((c: { isPrimary: boolean }) => c.isPrimary);
  // The demo seed may already hold a locked result: then this is a re-analysis, with a reason, that can never be locked.
  const reanalysis = primary.lockedRunId !== null;

  const card = page.getByRole('article', { name: primary.label, exact: true });
  await expect(card.getByText('Pre-specified')).toBeVisible();
  await card.getByRole('button', { name: 'Run confirmatory' }).click();
  if (reanalysis) {
    const dialog = page.getByRole('dialog', { name: 'Analyse this comparison again' });
    await dialog.getByLabel('Why are the data analysed again?').fill('Checking the locked result after two score sheets were corrected.');
    await dialog.getByRole('button', { name: 'Queue the re-analysis' }).click();
    await expect(dialog).toBeHidden();
  }
  await expect(card.getByText('Latest: confirmatory run')).toBeVisible();
  await expect(card.getByText('Finished', { exact: true })).toBeVisible({ timeout: 90_000 });
  await card.getByRole('link', { name: 'Read the results', exact: true }).click();

  await expect(page).toHaveURL(/\/comparisons\/runs\/[0-9a-f-]+$/);
  const runId = page.url().split('/runs/')[1];
  const run = await (await page.request.get(`/api/runs/${runId}`)).json();
  expect(run).toMatchObject({ kind: 'confirmatory', state: 'finished', comparisonId: primary.id });
  const results = run.results;

  // The page shows the run's own numbers, rounded as displayed, primary result first.
  await expect(page.getByRole('heading', { name: 'The primary result' })).toBeVisible();
  await expect(page.getByTestId('primary-test')).toContainText(`t = ${shown(results.primary.t)}`);
  await expect(page.getByTestId('effect-size')).toContainText(`Hedges’ g = ${shown(results.effectSize.g)}`);
  await expect(page.getByTestId('headline')).toContainText(shown(Math.abs(results.primary.meanDifference)));
  await expect(page.getByTestId('multiplicity')).toContainText('Benjamini–Hochberg');
  await expect(page.getByRole('heading', { name: 'Read these numbers with care' })).toBeVisible();
  await expect(page.getByRole('table', { name: 'Effect size by site' }).getByRole('row')).toHaveCount(results.sites.length + 2);
  await expect(page.getByTestId('interim-mark')).toHaveCount(0);
  await expectAccessible(page);

  if (reanalysis) {
    await expect(page.getByRole('button', { name: 'Lock this result' })).toHaveCount(0);
    await expect(page.getByTestId('reanalysis-note')).toContainText('stays unlocked');
    const refused = await page.request.post(`/api/runs/${runId}/lock`, { headers: await csrfHeader(page) });
    expect(refused.status()).toBe(409);
  } else {
    await page.getByRole('button', { name: 'Lock this result' }).click();
    const dialog = page.getByRole('dialog', { name: 'Lock this result?' });
    await expect(dialog).toContainText('Locking is final');
    await dialog.getByRole('button', { name: 'Lock this result' }).click();
    await expect(dialog).toBeHidden();
    await expect(page.getByText('SHA-256 of the data')).toBeVisible();
    await expect(page.getByRole('button', { name: 'Lock this result' })).toHaveCount(0);
    expect((await (await page.request.get(`/api/runs/${runId}`)).json()).state).toBe('locked');
  }

  // The bundle: the input rows, and numbers anyone can recompute from them.
  const bundleDownload = page.waitForEvent('download');
  await page.getByRole('link', { name: 'Download the bundle' }).click();
  const bundle = JSON.parse(await readFile((await (await bundleDownload).path())!, 'utf8'));
  expect(bundle.rows.length).toBeGreaterThan(0);
  expect(bundle.dataSha256).toMatch(/^[0-9a-f]{64}$/);
  // The data hash, as the bundle's README says: per classroom (its rows are consecutive) the SHA-256 of its
  // "student_code,outcome" lines and of its "student_code,pretest" lines, then the summary-only classrooms' lines.
  const sha = (lines: string[]) => createHash('sha256').update(lines.join('\n')).digest('hex');
  const digest = (lines: string[]) => (lines.length ? sha(lines) : '');
  const byClassroom: string[][][] = [];
  for (const fields of (bundle.rows as string[]).map((line) => line.split(','))) {
    const last = byClassroom.at(-1);
    if (last && last[0][0] === fields[0]) last.push(fields);
    else byClassroom.push([fields]);
  }
  const classroomLines = byClassroom.map((rows) => {
    const outcome = digest(rows.filter((f) => f[3] !== '').map((f) => `${f[2]},${f[3]}`));
    const pretest = digest(rows.filter((f) => f[4] !== '').map((f) => `${f[2]},${f[4]}`));
    return `${rows[0][0]},${rows[0][1]},${outcome},${pretest}`;
  });
  expect(sha([...classroomLines, ...(bundle.summaries ?? [])])).toBe(bundle.dataSha256);
  // The students analysed are those with an outcome; Welch's t over them is a sensitivity check.
  const outcomes = { intervention: [] as number[], comparison: [] as number[] };
  for (const line of bundle.rows as string[]) {
    const [, arm, , outcome] = line.split(',');
    if (outcome !== '') outcomes[arm as keyof typeof outcomes].push(Number(outcome));
  }
  const recomputed = welchT(outcomes.intervention, outcomes.comparison);
  expect(recomputed.t).toBeCloseTo(results.sensitivity.welch.t, 9);
  expect(recomputed.df).toBeCloseTo(results.sensitivity.welch.df, 6);
  // The registered two-level model, refitted from the bundle alone: students with both scores, nested in their
  // classrooms, with the classrooms' schools as blocks and the pretest as covariate.
  const schoolOf = new Map<string, string>(bundle.classrooms.map((c: { classroomId: string; siteId: string }) => [c.classroomId, c.siteId]));
  const both = (bundle.rows as string[]).map((line) => line.split(',')).filter((f) => f[3] !== '' && f[4] !== '');
  const refit = twoLevelFromRows({
    y: both.map((f) => Number(f[3])),
    arm: both.map((f) => (f[1] === 'intervention' ? 1 : 0)),
    cluster: both.map((f) => f[0]),
    block: both.map((f) => schoolOf.get(f[0])!),
    covariates: [both.map((f) => Number(f[4]))],
  }, { confidence: 1 - results.alpha });
  expect(results.primary.test).toBe('two-level');
  expect(refit.estimate).toBeCloseTo(results.twoLevel.estimate, 8);
  expect(refit.df).toBeCloseTo(results.twoLevel.df, 6);
  expect(refit.p).toBeCloseTo(results.twoLevel.p, 8);

  const csvDownload = page.waitForEvent('download');
  await page.getByRole('button', { name: 'Download results CSV' }).click();
  const csv = await readFile((await (await csvDownload).path())!, 'utf8');
  expect(csv).toContain(`primary,t,${results.primary.t}`);
  expect(csv).toContain(`effect size,hedges g,${results.effectSize.g}`);

  // The printable report: no navigation on paper, the flow diagram and results kept.
  await page.getByRole('link', { name: 'All comparisons' }).click();
  await page.getByRole('link', { name: 'Open the study report' }).click();
  await expect(page.getByRole('heading', { name: 'Study report' })).toBeVisible();
  await expect(page.getByRole('heading', { name: 'Participant flow' })).toBeVisible();
  await expect(page.getByRole('region', { name: 'Intervention arm', exact: true })).toContainText('Allocated');
  await expectFlowMatchesAttrition(page, primary.measureName);
  await expectAccessible(page);

  await page.emulateMedia({ media: 'print' });
  await expect(page.getByRole('navigation', { name: 'Main' })).toBeHidden();
  await expect(page.getByRole('navigation', { name: 'Study' })).toBeHidden();
  await expect(page.getByRole('button', { name: 'Print the report' })).toBeHidden();
  await expect(page.getByRole('heading', { name: 'Participant flow' })).toBeVisible();
  await expect(page.getByRole('img', { name: /Effect sizes of \d+ comparisons/ })).toBeVisible();
  await page.screenshot({ path: test.info().outputPath('study-report-print.png'), fullPage: true });
  await page.emulateMedia({ media: 'screen' });
});

test('a monitoring check is marked interim and has no Benjamini–Hochberg line or lock', async ({ page }) => {
  test.setTimeout(90_000);
  await signIn(page, 'lead@evenhand.test');
  const studyId = await openDemoStudyTab(page, 'Comparisons');
  const comparisons = await (await page.request.get(`/api/studies/${studyId}/comparisons`)).json();
  const second = comparisons.items.find((c: { prespecified: boolean; isPrimary: boolean }) => c.prespecified && !c.isPrimary);
  const card = page.getByRole('article', { name: second.label, exact: true });
  await card.getByRole('button', { name: 'Run a monitoring check' }).click();
  if (second.lockedRunId) {
    const dialog = page.getByRole('dialog', { name: 'Analyse this comparison again' });
    await dialog.getByLabel('Why are the data analysed again?').fill('An interim look at the scores submitted since the lock.');
    await dialog.getByRole('button', { name: 'Queue the monitoring check' }).click();
  }
  await expect(card.getByText('Latest: monitoring check')).toBeVisible();
  await expect(card.getByText('Finished', { exact: true })).toBeVisible({ timeout: 60_000 });
  await card.getByRole('link', { name: 'Read the results', exact: true }).click();
  await expect(page.getByTestId('interim-mark')).toContainText('Interim — not confirmatory');
  await expect(page.getByTestId('multiplicity')).toHaveCount(0);
  await expect(page.getByRole('button', { name: 'Lock this result' })).toHaveCount(0);
});

/**
 * The report's flow and its attrition table count from one accounting: summed over the arms, the flow's allocated and
 * analysed classrooms and students are the table's randomised and analysed for the primary measure, and its overall
 * attrition is the share not analysed.
 */
async function expectFlowMatchesAttrition(page: Page, measureName: string) {
  const numbers = async (testId: string) => {
    let classrooms = 0;
    let students = 0;
    for (const arm of ['Intervention arm', 'Comparison arm']) {
      const text = await page.getByRole('region', { name: arm, exact: true }).getByTestId(testId).innerText();
      const [, c, s] = /([\d,]+) classrooms?, ([\d,]+) students?/.exec(text)!;
      classrooms += Number(c.replaceAll(',', ''));
      students += Number(s.replaceAll(',', ''));
    }
    return { classrooms, students };
  };
  const [allocated, analysed] = [await numbers('flow-allocated'), await numbers('flow-analysed')];
  expect(analysed.students).toBeLessThanOrEqual(allocated.students);
  const attrition = page.getByRole('table', { name: /^Attrition against the published boundaries/ });
  for (const [unit, key] of [['Students', 'students'], ['Classrooms', 'classrooms']] as const) {
    const row = attrition.getByRole('row').filter({ has: page.getByRole('rowheader', { name: measureName, exact: true }) }).filter({ hasText: unit });
    const overall = 100 * (1 - analysed[key] / allocated[key]);
    await expect(row.getByRole('cell')).toHaveText([unit, formatCount(allocated[key]), formatCount(analysed[key]), formatPercent(overall), /pp$/, /./]);
  }
}


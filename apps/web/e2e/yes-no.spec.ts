import { clusterRobustFromRows, proportionDifference, proportionWithInterval } from '@evenhand/stats';
import { expect, test, type Page } from '@playwright/test';
import { formatCount, formatInterval, formatNumber, formatSigned } from '../src/lib/format';
import { DEMO_STUDY, expectAccessible, queryDatabase, signIn } from './support';

/**
 * The demo study's yes/no comparison ("Read at grade level by spring"): the research lead analyses it again (it is
 * locked, so the run is a re-analysis with a reason and never replaces the locked result), reads each arm's yes count
 * and percentage, the difference in percentage points and the deciding regression on the results page, and every
 * number agrees with a recomputation from the 0/1 rows of the sheets the run read. At 390 px the page does not scroll
 * sideways.
 */
const MEASURE = 'Read at grade level by spring';

interface AnswerRow {
  arm: 'intervention' | 'comparison';
  classroom_id: string;
  site_id: string;
  score: number;
}

/** A fraction in percent with one decimal, and an interval of fractions in points, as the page rounds them. */
const percent = (x: number) => `${formatNumber(x * 100, 1)} %`;
const points = (ci: readonly [number, number]) => formatInterval([ci[0] * 100, ci[1] * 100], 1);

async function noSidewaysScroll(page: Page) {
  const { scroll, view } = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, view: window.innerWidth }));
  expect(scroll, `the page is ${scroll} px wide in a ${view} px window`).toBeLessThanOrEqual(view);
}

test('the research lead analyses the yes/no comparison again and reads percentages and the difference that agree with the rows, also on a phone', async ({ page }) => {
  test.setTimeout(180_000);
  await signIn(page, 'lead@evenhand.test');
  await page.getByRole('link', { name: DEMO_STUDY }).click();
  await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: 'Comparisons' }).click();
  await expect(page).toHaveURL(/\/studies\/[0-9a-f-]+\/comparisons$/);
  const studyId = page.url().split('/studies/')[1].split('/')[0];

  const { items } = await (await page.request.get(`/api/studies/${studyId}/comparisons`)).json();
  const comparison = items.find((c: { measureName: string }) => c.measureName === MEASURE);
  expect(comparison, 'the demo study pre-specifies a yes/no comparison').toBeTruthy();
  const card = page.getByRole('article', { name: comparison.label, exact: true });
  await card.getByRole('button', { name: 'Run confirmatory' }).click();
  if (comparison.lockedRunId !== null) {
    const dialog = page.getByRole('dialog', { name: 'Analyse this comparison again' });
    await dialog.getByLabel('Why are the data analysed again?').fill('Reading the yes/no result again from the accepted sheets.');
    await dialog.getByRole('button', { name: 'Queue the re-analysis' }).click();
    await expect(dialog).toBeHidden();
  }
  await expect(card.getByText('Latest: confirmatory run')).toBeVisible();
  await expect(card.getByText('Finished', { exact: true })).toBeVisible({ timeout: 120_000 });
  await card.getByRole('link', { name: 'Read the results', exact: true }).click();
  await expect(page).toHaveURL(/\/comparisons\/runs\/[0-9a-f-]+$/);
  const runId = page.url().split('/runs/')[1];

  // The rows the run read: each student's 0/1 answer on the accepted outcome sheets it froze, the classroom's arm as
  // drawn and its school (the draw's block); the plan's alpha and sidedness.
  const rows = await queryDatabase<AnswerRow>(
    `SELECT c.arm, c.id AS classroom_id, c.site_id, o.score::float8 AS score
       FROM runs r JOIN comparisons k ON k.id = r.comparison_id
       JOIN score_sheets sh ON sh.id = ANY (r.input_sheet_ids) AND sh.wave_id = k.wave_id AND sh.measure_id = k.measure_id
       JOIN scores o ON o.sheet_id = sh.id AND o.score IS NOT NULL
       JOIN classrooms c ON c.id = o.classroom_id
      WHERE r.id = $1`,
    [runId],
  );
  const [plan] = await queryDatabase<{ alpha: number; alternative: 'two-sided' | 'greater' | 'less' }>(
    `SELECT (p.content->>'alpha')::float8 AS alpha, p.content->>'alternative' AS alternative
       FROM runs r JOIN plan_versions p ON p.study_id = r.study_id AND p.version = r.plan_version WHERE r.id = $1`,
    [runId],
  );
  expect(rows.length).toBeGreaterThan(0);
  expect(rows.every((r) => r.score === 0 || r.score === 1)).toBe(true);
  const count = (arm: AnswerRow['arm']) => {
    const mine = rows.filter((r) => r.arm === arm);
    return { yes: mine.filter((r) => r.score === 1).length, n: mine.length };
  };
  const [i, c] = [count('intervention'), count('comparison')];
  const confidence = 1 - plan.alpha;
  // The deciding analysis of a classroom-assigned study: the linear probability regression on the 0/1 rows with CR2
  // errors, classrooms as clusters and their schools as blocks (as the run fits it from per-classroom sums).
  const lp = clusterRobustFromRows(
    { y: rows.map((r) => r.score), arm: rows.map((r) => (r.arm === 'intervention' ? 1 : 0)), cluster: rows.map((r) => r.classroom_id), block: rows.map((r) => r.site_id) },
    { confidence, alternative: plan.alternative },
  );

  await expect(page.getByRole('heading', { name: 'The primary result' })).toBeVisible();
  // Each arm: its yes count of its students and percentage with Wilson's interval.
  const arms = page.getByRole('table', { name: 'Answers by arm' });
  for (const [label, k] of [['Intervention', i], ['Comparison', c]] as const) {
    const w = proportionWithInterval(k, { confidence });
    const row = arms.getByRole('row', { name: new RegExp(`^${label}`) });
    await expect(row).toContainText(`${formatCount(k.yes)} of ${formatCount(k.n)}`);
    await expect(row).toContainText(`${percent(w.proportion)} ${points(w.ci)}`);
  }
  // The headline in whole percentages, the difference in points with Newcombe's interval, and the deciding regression.
  const pct = (k: { yes: number; n: number }) => `${formatNumber((k.yes / k.n) * 100, 0)} %`;
  await expect(page.getByTestId('headline')).toContainText(`${pct(i)} of intervention students answered yes to “${MEASURE}”`);
  await expect(page.getByTestId('headline')).toContainText(`against ${pct(c)} of comparison students`);
  const d = proportionDifference(i, c, { confidence });
  await expect(page.getByTestId('yes-no-difference')).toContainText(`Difference ${formatSigned(d.difference * 100, 1)} percentage points (${formatNumber(confidence * 100, 0)}% CI ${points(d.ci)}, Newcombe)`);
  await expect(page.getByTestId('deciding-test')).toContainText(`difference ${formatSigned(lp.estimate * 100, 1)} points (${formatNumber(confidence * 100, 0)}% CI ${points(lp.ci as [number, number])})`);
  // No score figures for 0/1 answers.
  await expect(page.getByText(/Hedges’ g|Shapiro–Wilk|Average score/)).toHaveCount(0);
  await expect(page.getByRole('heading', { name: 'Site by site' })).toHaveCount(0);
  await expectAccessible(page);

  // On a phone the page itself never scrolls sideways (a table may scroll in its own frame).
  await page.setViewportSize({ width: 390, height: 844 });
  await page.reload();
  await expect(page.getByRole('table', { name: 'Answers by arm' })).toBeVisible();
  await noSidewaysScroll(page);
});

import { clusterAdjusted, hedgesCorrection, hedgesG, improvementIndex, studentTQuantile, twoLevelFromRows, welchT } from '@evenhand/stats';
import { expect, test, type Locator, type Page } from '@playwright/test';
import { formatCount, formatInterval, formatNumber, formatPStatement, formatSigned } from '../src/lib/format';
import { areas, homePathFor, navigationFor, studyTabs, studyTabsFor, type Area, type StudyTab } from '../src/lib/navigation';
import { DEMO_PASSWORD, DEMO_STUDY, STUDENT_CODE, demoWaveName, expectAccessible, queryDatabase, studentCountsShown } from './support';

/**
 * The demo tour: every demo role signs in with the keyboard alone, then opens its home, every other area it has
 * and every tab of the demo study it may read, checking real content and accessibility on each. The numbers of
 * the locked results are recomputed here with the statistics engine from the score rows in the database.
 */

type Role = 'admin' | 'coordinator' | 'research_lead' | 'teacher' | 'principal' | 'reviewer';

const tour: { role: Role; email: string; label: string }[] = [
  { role: 'admin', email: 'admin@evenhand.test', label: 'the district admin' },
  { role: 'coordinator', email: 'coordinator@evenhand.test', label: 'the coordinator' },
  { role: 'research_lead', email: 'lead@evenhand.test', label: 'the research lead' },
  { role: 'teacher', email: 'teacher1@evenhand.test', label: 'a teacher' },
  { role: 'principal', email: 'principal1@evenhand.test', label: 'a principal' },
  { role: 'reviewer', email: 'reviewer@evenhand.test', label: 'the reviewer' },
];

const grantsOf = (role: Role) => [{ role, siteId: null }];

// ---------------------------------------------------------------------------------------------------------------
// The seeded rows and the numbers recomputed from them.

interface ScoreRow {
  arm: 'intervention' | 'comparison';
  classroom_id: string;
  site_name: string;
  score: number;
  /** The student's score on the classroom's baseline sheet the run read (same measure), or null. */
  pretest: number | null;
}

interface LockedRun {
  id: string;
  study_id: string;
  label: string;
  is_primary: boolean;
  alpha: number;
  alternative: 'two-sided' | 'greater' | 'less';
  icc: number;
  rows: ScoreRow[];
}

/**
 * The demo study's locked runs, each with the outcome rows of the sheets it froze (classroom arms as drawn) and each
 * student's pretest from the baseline sheet of the same classroom among the run's input sheets.
 */
async function lockedRuns(): Promise<LockedRun[]> {
  const runs = await queryDatabase<Omit<LockedRun, 'rows'>>(
    `SELECT r.id, r.study_id, k.label, k.is_primary, (p.content->>'alpha')::float8 AS alpha, p.content->>'alternative' AS alternative,
            (p.content->>'icc')::float8 AS icc
       FROM runs r JOIN comparisons k ON k.id = r.comparison_id JOIN studies s ON s.id = r.study_id
       JOIN plan_versions p ON p.study_id = r.study_id AND p.version = r.plan_version
      WHERE s.title = $1 AND r.state = 'locked'`,
    [DEMO_STUDY],
  );
  return Promise.all(
    runs.map(async (run) => ({
      ...run,
      rows: await queryDatabase<ScoreRow>(
        `SELECT c.arm, c.id AS classroom_id, si.name AS site_name, o.score::float8 AS score, b.score::float8 AS pretest
           FROM runs r JOIN comparisons k ON k.id = r.comparison_id
           JOIN score_sheets sh ON sh.id = ANY (r.input_sheet_ids) AND sh.wave_id = k.wave_id AND sh.measure_id = k.measure_id
           JOIN scores o ON o.sheet_id = sh.id AND o.score IS NOT NULL
           JOIN classrooms c ON c.id = o.classroom_id JOIN sites si ON si.id = c.site_id
           LEFT JOIN (score_sheets bs JOIN waves bw ON bw.id = bs.wave_id AND bw.kind = 'baseline')
                  ON bs.id = ANY (r.input_sheet_ids) AND bs.classroom_id = sh.classroom_id AND bs.measure_id = sh.measure_id
           LEFT JOIN scores b ON b.sheet_id = bs.id AND b.student_code = o.student_code AND b.score IS NOT NULL
          WHERE r.id = $1`,
        [run.id],
      ),
    })),
  );
}

const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
const sd = (xs: number[]) => Math.sqrt(xs.reduce((s, x) => s + (x - mean(xs)) ** 2, 0) / (xs.length - 1));

/**
 * The registered two-level model refitted from the rows: students with both scores nested in their classrooms, the
 * schools as blocks and the pretest as covariate (as apps/api/src/runs/clustered.ts fits it from the same students).
 * Its g's 95% interval is the adjusted difference's interval on g's scale, as the run reports it.
 */
function recompute(run: LockedRun) {
  const arm = (a: ScoreRow['arm']) => run.rows.filter((r) => r.arm === a);
  const scores = (a: ScoreRow['arm']) => arm(a).map((r) => r.score);
  const classrooms = (a: ScoreRow['arm']) => new Set(arm(a).map((r) => r.classroom_id)).size;
  const [a, b] = [scores('intervention'), scores('comparison')];
  const both = run.rows.filter((r) => r.pretest !== null);
  const model = twoLevelFromRows(
    {
      y: both.map((r) => r.score),
      arm: both.map((r) => (r.arm === 'intervention' ? 1 : 0)),
      cluster: both.map((r) => r.classroom_id),
      block: both.map((r) => r.site_name),
      covariates: [both.map((r) => r.pretest!)],
    },
    { confidence: 1 - run.alpha, alternative: run.alternative },
  );
  const scale = model.gCorrection / model.pooledSd;
  const q = studentTQuantile(0.975, model.df);
  const g = { g: model.g, ci: [scale * (model.estimate - q * model.se), scale * (model.estimate + q * model.se)] as [number, number] };
  const clustering = clusterAdjusted({ g: hedgesG(a, b).g, n1: a.length, n2: b.length, clusters1: classrooms('intervention'), clusters2: classrooms('comparison'), icc: run.icc });
  return { a, b, model, g, welch: welchT(a, b, { alternative: run.alternative, confidence: 0.95 }), clustering, classrooms, met: model.p < run.alpha };
}

/**
 * Each site's arms as the results page weighs them: classroom means weighted by 1/(τ² + σ²/n) with the variance
 * components of the model without pretest or blocks, over every student with an outcome; g on the whole
 * comparison's pooled SD with Hedges' correction (apps/api/src/runs/clustered.ts siteEstimatesFromComponents).
 */
function siteRows(run: LockedRun) {
  const { tau2, sigma2 } = twoLevelFromRows({
    y: run.rows.map((r) => r.score),
    arm: run.rows.map((r) => (r.arm === 'intervention' ? 1 : 0)),
    cluster: run.rows.map((r) => r.classroom_id),
  });
  const [a, b] = [run.rows.filter((r) => r.arm === 'intervention').map((r) => r.score), run.rows.filter((r) => r.arm === 'comparison').map((r) => r.score)];
  const ss = (xs: number[]) => xs.reduce((t, x) => t + (x - mean(xs)) ** 2, 0);
  const pooledSd = Math.sqrt((ss(a) + ss(b)) / (a.length + b.length - 2));
  const omega = hedgesCorrection(a.length + b.length - 2);
  return [...new Set(run.rows.map((r) => r.site_name))].map((site) => {
    const side = (arm: ScoreRow['arm']) => {
      const byRoom = new Map<string, number[]>();
      for (const r of run.rows) if (r.site_name === site && r.arm === arm) byRoom.set(r.classroom_id, [...(byRoom.get(r.classroom_id) ?? []), r.score]);
      const rooms = [...byRoom.values()].map((xs) => ({ n: xs.length, mean: mean(xs), w: 1 / (tau2 + sigma2 / xs.length) }));
      const total = rooms.reduce((t, c) => t + c.w, 0);
      return { n: rooms.reduce((t, c) => t + c.n, 0), mean: rooms.reduce((t, c) => t + c.w * c.mean, 0) / total };
    };
    const [x, y] = [side('intervention'), side('comparison')];
    return { site, x, y, g: (omega * (x.mean - y.mean)) / pooledSd };
  });
}

const effectSizeText = (g: { g: number; ci: [number, number] }) =>
  `Hedges’ g = ${formatNumber(g.g, 2)} (95% CI ${formatInterval(g.ci, 2)}); improvement index ${formatSigned(improvementIndex(g.g), 1)} percentile points`;

// ---------------------------------------------------------------------------------------------------------------
// What each screen must show.

interface Visit {
  page: Page;
  role: Role;
  runs: LockedRun[];
}

const main = (page: Page) => page.getByRole('main');
const table = (page: Page, name: string | RegExp) => main(page).getByRole('table', { name, exact: typeof name === 'string' });
/** Body rows of a table (rows with a cell), not its header. */
const bodyRows = (t: Locator) => t.getByRole('row').filter({ has: t.page().getByRole('cell') });

async function expectStudentCodesOnly(page: Page) {
  const codes = await main(page).getByRole('table').first().getByRole('rowheader').allTextContents();
  expect(codes.length).toBeGreaterThan(0);
  for (const code of codes) expect(code.trim()).toMatch(STUDENT_CODE);
}

async function openDemoStudy(page: Page) {
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Studies' }).click();
  await main(page).getByRole('link', { name: DEMO_STUDY }).click();
  await expect(page.getByRole('heading', { level: 1, name: DEMO_STUDY })).toBeVisible();
}

async function openTab(page: Page, tab: StudyTab) {
  await page.getByRole('navigation', { name: 'Study' }).getByRole('link', { name: studyTabs[tab].label, exact: true }).click();
  await expect(page).toHaveURL(new RegExp(`/studies/[0-9a-f-]+/${studyTabs[tab].path}$`));
}

const DRAFT_STUDY = 'Number Journal Prompts in grade 5';

/** The home's "Waiting for you": what the seed leaves for each role, counted from the database. */
async function expectToDo({ page, role }: Visit) {
  const panel = main(page).getByRole('region', { name: 'Waiting for you' });
  const item = (title: string | RegExp, study: string) => panel.getByRole('listitem').filter({ hasText: study }).filter({ has: page.getByRole('link', { name: title }) });
  if (role === 'coordinator') {
    await expect(item('Enrol the schools', DRAFT_STUDY).getByRole('link')).toHaveAttribute('href', /\/sites$/);
    // The seed leaves the Fernquillow Room 3A follow-up sheets unentered after their wave closed.
    const late = item(/^\d+ score sheets are late$/, DEMO_STUDY).getByRole('link');
    await expect(late).toHaveAttribute('href', /\/score-sheets$/);
    expect(Number((await late.textContent())!.split(' ')[0])).toBeGreaterThanOrEqual(2);
  } else if (role === 'research_lead') {
    await expect(item('Seal the plan', DRAFT_STUDY).getByRole('link')).toHaveAttribute('href', /\/plan$/);
  } else if (role === 'reviewer') {
    const [{ n }] = await queryDatabase<{ n: number }>(`SELECT count(*)::int AS n FROM runs r JOIN studies s ON s.id = r.study_id WHERE s.title = $1 AND r.state = 'locked'`, [DEMO_STUDY]);
    await expect(item(`${n} locked results to review`, DEMO_STUDY).getByRole('link')).toHaveAttribute('href', /\/comparisons$/);
  } else if (role === 'admin') {
    const [{ n }] = await queryDatabase<{ n: number }>(`SELECT count(*)::int AS n FROM users WHERE active AND password_hash IS NULL`);
    if (n > 0) await expect(panel).toContainText(`${n} invited ${n === 1 ? 'person has' : 'people have'} not chosen a password`);
    else await expect(panel).toContainText('Nothing waits for you right now.');
  }
}

const areaChecks: Partial<Record<keyof typeof areas, (v: Visit) => Promise<void>>> = {
  async accounts(visit) {
    const { page } = visit;
    await expect(page.getByRole('heading', { level: 1, name: 'Accounts' })).toBeVisible();
    await expectToDo(visit);
    const accounts = table(page, 'Accounts');
    await expect(bodyRows(accounts).first()).toBeVisible();
    await expect(accounts.getByRole('row').filter({ hasText: 'admin@evenhand.test' })).toContainText('District admin');
  },
  async studies(visit) {
    const { page, role } = visit;
    await expect(page.getByRole('heading', { level: 1, name: 'Studies' })).toBeVisible();
    // Only on a person's home: the admin reads Studies without it.
    if (role === 'admin') await expect(main(page).getByRole('region', { name: 'Waiting for you' })).toHaveCount(0);
    else await expectToDo(visit);
    if (role === 'coordinator') {
      // A dialog form from the keyboard: it opens on Enter, holds the focus, and Escape gives it back.
      const start = main(page).getByRole('button', { name: 'Start a study' });
      await tabTo(page, start);
      await page.keyboard.press('Enter');
      const dialog = page.getByRole('dialog', { name: 'Start a study' });
      await expect(dialog.getByLabel('Title')).toBeFocused();
      await page.keyboard.type('Not kept');
      await page.keyboard.press('Escape');
      await expect(dialog).toBeHidden();
      await expect(start).toBeFocused();
    }
    const row = table(page, 'Studies').getByRole('row').filter({ hasText: DEMO_STUDY });
    const [{ sites, classrooms }] = await queryDatabase<{ sites: number; classrooms: number }>(
      `SELECT (SELECT count(*)::int FROM study_sites x WHERE x.study_id = s.id) AS sites, (SELECT count(*)::int FROM classrooms c WHERE c.study_id = s.id) AS classrooms
         FROM studies s WHERE s.title = $1`,
      [DEMO_STUDY],
    );
    await expect(row.getByRole('cell').nth(4)).toHaveText(String(sites));
    await expect(row.getByRole('cell').nth(5)).toHaveText(String(classrooms));
  },
  async audit({ page }) {
    await expect(page.getByRole('heading', { level: 1, name: 'Audit' })).toBeVisible();
    await expect(bodyRows(table(page, 'Audit trail')).first()).toBeVisible();
  },
  async myClasses({ page }) {
    await expect(page.getByRole('heading', { level: 1, name: 'My classes' })).toBeVisible();
    const study = main(page).getByRole('region', { name: DEMO_STUDY, exact: true });
    const room = study.getByRole('region', { name: 'Room 3A · Alderquill Elementary' });
    // Three measures (two scores and a yes/no) at three waves.
    await expect(bodyRows(room.getByRole('table'))).toHaveCount(9);
    // What to do next: the sheets the coordinator returned to this teacher (the seed returns one; a journey may fix it).
    const [{ returned }] = await queryDatabase<{ returned: number }>(
      `SELECT count(*)::int AS returned FROM score_sheets sh JOIN classrooms c ON c.id = sh.classroom_id JOIN users u ON u.id = c.teacher_id
        WHERE u.email = 'teacher1@evenhand.test' AND sh.state = 'returned'`,
    );
    const waiting = main(page).getByRole('status').filter({ hasText: 'Waiting for you' });
    if (returned > 0) await expect(waiting).toContainText(`${returned} sheet${returned === 1 ? ' was' : 's were'} returned by the coordinator for corrections.`);
    else await expect(waiting).not.toContainText('returned by the coordinator');
    // Only this teacher's classrooms: both of them at Alderquill, none elsewhere.
    await expect(study.getByRole('heading', { level: 3 })).toHaveText(['Room 3A · Alderquill Elementary', 'Room 3B · Alderquill Elementary']);
    const baseline = await demoWaveName('baseline');
    await room.getByRole('link', { name: new RegExp(`^View the ${baseline} Oral reading fluency`) }).click();
    await expect(page.getByRole('heading', { level: 1, name: `Room 3A · ${baseline}` })).toBeVisible();
    await expect(main(page)).toContainText('Alderquill Elementary');
    await expectStudentCodesOnly(page);
    await expectAccessibleOnce(page);
    await page.getByRole('link', { name: 'My classes' }).first().click();
    await expect(page.getByRole('heading', { level: 1, name: 'My classes' })).toBeVisible();
  },
  async mySchool({ page, runs }) {
    await expect(page.getByRole('heading', { level: 1, name: 'My school' })).toBeVisible();
    // A journey may have enrolled the school in a study of its own too: read the demo study's section.
    const school = main(page).getByRole('region', { name: 'Alderquill Elementary', exact: true }).filter({ hasText: DEMO_STUDY });
    await expect(school).toBeVisible();
    for (const other of ['Brackenwold Middle School', 'Cinderhaze Elementary', 'Fernquillow Elementary']) await expect(main(page)).not.toContainText(other);
    // The locked primary result in plain words, with the recomputed effect size and p.
    const primary = runs.find((r) => r.is_primary)!;
    const { g, model, met, a, b } = recompute(primary);
    const result = school.getByRole('article', { name: primary.label, exact: true });
    await expect(result).toContainText(`Hedges’ g = ${formatNumber(g.g, 2)} (95% interval ${formatNumber(g.ci[0], 2)} to ${formatNumber(g.ci[1], 2)})`);
    // The deciding analysis's p (the two-level model), never the student-level one.
    await expect(result.getByRole('definition').filter({ hasText: /^(Met|Not met)$/ })).toHaveText(met ? 'Met' : 'Not met');
    await expect(result).toContainText(formatPStatement(model.p));
    expect(a.length + b.length).toBeGreaterThan(0);
    // The school's own arms, recomputed from its rows as the forest plot weighs them; any group under 10 students must not show its count.
    const own = primary.rows.filter((r) => r.site_name === 'Alderquill Elementary');
    const weighed = siteRows(primary).find((r) => r.site === 'Alderquill Elementary')!;
    const ownTable = result.getByRole('table', { name: 'Alderquill Elementary on its own' });
    for (const [arm, label] of [['intervention', 'Intervention classrooms'], ['comparison', 'Comparison classrooms']] as const) {
      const values = own.filter((r) => r.arm === arm).map((r) => r.score);
      const row = ownTable.getByRole('row').filter({ has: page.getByRole('rowheader', { name: label }) });
      if (values.length >= 10) await expect(row.getByRole('cell')).toHaveText([formatCount(values.length), formatNumber((arm === 'intervention' ? weighed.x : weighed.y).mean, 1)]);
      else await expect(row).toContainText('fewer than 10 students');
    }
    const counts = await studentCountsShown(page);
    expect(counts.length).toBeGreaterThan(0);
    for (const value of counts) {
      if (value === '' || value === 'fewer than 10 students') continue;
      expect(Number(value.replace(/,/g, ''))).toBeGreaterThanOrEqual(10);
    }
  },
};

const tabChecks: Record<StudyTab, (v: Visit) => Promise<void>> = {
  async overview({ page }) {
    const numbers = main(page).getByRole('region', { name: 'In numbers' });
    // Schools, classrooms, measures, waves (baseline, outcome and follow-up).
    await expect(numbers.getByRole('definition')).toHaveText(['6', '24', '3', '3']);
    await expect(main(page).getByRole('region', { name: 'Where it stands' })).toContainText('version 2 is in force');
    await expect(main(page).getByRole('region', { name: 'Next steps for you' }).getByRole('listitem').first()).toBeVisible();
  },
  async plan({ page }) {
    const plan = main(page).getByRole('region', { name: 'The plan in force: version 2' });
    await expect(plan).toContainText('Oral reading fluency (words correct per minute)');
    await expect(plan).toContainText('Two-level model: students within their assigned classrooms or schools');
    await expect(main(page).getByRole('region', { name: 'Version history' })).toContainText('Version 2 · amendment');
    // The power chart's text equivalent: its name says what it shows and a table lists its points.
    await expect(plan.getByRole('img', { name: /minimum detectable effect size falls/ })).toBeVisible();
    await expect(bodyRows(plan.getByRole('table', { name: 'MDES by classrooms per arm' })).first()).toBeVisible();
  },
  async sites({ page }) {
    await expect(bodyRows(table(page, 'Enrolled sites'))).toHaveCount(6);
    await expect(table(page, 'Enrolled sites')).toContainText('Dr. Helena Moonquarry');
    await expect(bodyRows(table(page, 'Classrooms'))).toHaveCount(24);
    // The cohorts are named after the school year of the baseline wave ("Autumn 2025": 2025–26).
    const year = Number((await demoWaveName('baseline')).slice(-4));
    await expect(main(page).getByRole('region', { name: 'Cohorts' })).toContainText(`Grade 3, ${year}–${String((year + 1) % 100).padStart(2, '0')}`);
  },
  async draw({ page }) {
    const draw = main(page).getByRole('region', { name: 'The committed draw' });
    await expect(draw).toContainText('larkspur-valley-2025');
    await expect(bodyRows(draw.getByRole('table', { name: 'Assignments' }))).toHaveCount(24);
    await expect(bodyRows(draw.getByRole('table', { name: /^Balance/ })).first()).toBeVisible();
  },
  async scoreSheets({ page }) {
    await expect(main(page)).toContainText('24 classrooms, 216 sheets');
    const matrix = table(page, /^Completion of score sheets/);
    await expect(matrix.getByRole('rowheader', { name: 'Alderquill Elementary · 4 classrooms' })).toBeVisible();
    const baseline = await demoWaveName('baseline');
    await matrix.getByRole('link', { name: `Room 3A, ${baseline}, Oral reading fluency (words correct per minute): Accepted 22 rows` }).first().click();
    await expect(page.getByRole('heading', { level: 2, name: `Room 3A · ${baseline}` })).toBeVisible();
    await expectStudentCodesOnly(page);
    await expectAccessibleOnce(page);
    await page.getByRole('link', { name: 'All score sheets' }).click();
    await expect(matrix).toBeVisible();
  },
  async checks({ page }) {
    const fluency = main(page).getByRole('region', { name: 'Oral reading fluency (words correct per minute)', exact: true });
    await expect(bodyRows(fluency.getByRole('table', { name: /^Score sheets and scores by wave/ })).first()).toBeVisible();
    await expect(fluency.getByRole('table', { name: 'Students: attrition against the published boundaries' })).toContainText(/Cautious boundary/);
    // Box plots carry their medians in words, and a table of every box's quantiles.
    const baseline = await demoWaveName('baseline');
    await expect(fluency.getByRole('img', { name: new RegExp(`^Box plots of Oral reading fluency .* by arm and wave\\. ${baseline}: intervention median \\d`) })).toBeVisible();
    await expect(fluency.getByRole('img', { name: /the table below lists every box’s quantiles/ })).toBeVisible();
  },
  async comparisons({ page, runs }) {
    const prespecified = main(page).getByRole('region', { name: 'Pre-specified in the sealed plan' });
    await expect(prespecified.getByRole('article')).toHaveCount(runs.length);
    // Each card links its locked run: as its latest run, or beside a later re-analysis or monitoring check.
    const lockedLink = (run: LockedRun) => prespecified.getByRole('article', { name: run.label, exact: true }).locator(`a[href$="/comparisons/runs/${run.id}"]`);
    for (const run of runs) await expect(lockedLink(run)).toHaveText(/^Read the (locked result|results)$/);
    await expectAccessibleOnce(page);

    // The locked primary result: every number recomputed from the rows the run froze.
    const primary = runs.find((r) => r.is_primary)!;
    const x = recompute(primary);
    await lockedLink(primary).click();
    await expect(page).toHaveURL(new RegExp(`/comparisons/runs/${primary.id}$`));
    await expect(page.getByTestId('primary-test')).toHaveText(
      `Difference ${formatSigned(x.model.estimate, 2)} (${Math.round((1 - primary.alpha) * 100)}% CI ${formatInterval(x.model.ci, 2)}); ` +
        `t = ${formatNumber(x.model.t, 2)}, df = ${formatNumber(x.model.df, 1)}, ${formatPStatement(x.model.p)}`,
    );
    await expect(page.getByTestId('headline')).toContainText(`${formatNumber(Math.abs(x.model.estimate), 2)} ${x.model.estimate > 0 ? 'higher' : 'lower'}`);
    await expect(page.getByTestId('effect-size')).toHaveText(effectSizeText(x.g));
    const arms = table(page, `${primary.label}, by arm`);
    for (const [arm, values] of [['Intervention', x.a], ['Comparison', x.b]] as const) {
      const cells = [formatCount(values.length), String(x.classrooms(arm === 'Intervention' ? 'intervention' : 'comparison')), formatNumber(mean(values), 2), formatNumber(sd(values), 2), formatNumber(sd(values) / Math.sqrt(values.length), 2)];
      await expect(arms.getByRole('row').filter({ has: page.getByRole('rowheader', { name: arm, exact: true }) }).getByRole('cell')).toHaveText([...cells, /./, /./, /./, /./, /./]);
    }
    // Welch's t over students and the clustering correction are sensitivity checks now, each a row of their own.
    const sensitivity = table(page, 'Sensitivity checks');
    await expect(sensitivity.getByRole('row').filter({ hasText: 'Welch’s t test over students' })).toContainText(
      `t = ${formatNumber(x.welch.t, 2)}, df = ${formatNumber(x.welch.df, 1)}`,
    );
    await expect(sensitivity.getByRole('row').filter({ hasText: 'Welch’s t with the clustering correction' })).toContainText(
      `t = ${formatNumber(x.clustering.tAdjusted, 2)}, degrees of freedom ${formatNumber(x.clustering.df, 1)}`,
    );
    // The forest plot's text equivalent: each site's students, its arms as the model weighs its classrooms, and g.
    const bySite = table(page, 'Effect size by site');
    const sites = siteRows(primary);
    await expect(bodyRows(bySite)).toHaveCount(sites.length + 1);
    for (const { site, x: si, y: sc, g } of sites) {
      const cells = [formatCount(si.n), formatCount(sc.n), formatNumber(si.mean, 1), formatNumber(sc.mean, 1), formatNumber(g, 2)];
      await expect(bySite.getByRole('row').filter({ has: page.getByRole('rowheader', { name: site, exact: true }) }).getByRole('cell')).toHaveText([...cells, /./, /./]);
    }
    await expect(page.getByRole('img', { name: new RegExp(`^Forest plot of Hedges’ g for ${sites.length} sites`) })).toBeVisible();
    await expect(page.getByText('SHA-256 of the data')).toBeVisible();
    await expect(page.getByRole('button', { name: 'Lock this result' })).toHaveCount(0);
    await expectAccessibleOnce(page);

    // The printable report, on paper: no navigation, the flow diagram and the charts kept.
    await page.getByRole('link', { name: 'All comparisons' }).click();
    await page.getByRole('link', { name: 'Open the study report' }).click();
    await expect(page.getByRole('heading', { name: 'Study report' })).toBeVisible();
    const results = table(page, 'Results of every comparison');
    await expect(results.getByRole('row').filter({ hasText: primary.label })).toContainText(`${formatNumber(x.g.g, 2)}`);
    // Analysed are the students the deciding two-level model read: an outcome and a pretest score (runs/accounting.ts).
    const analysedIntervention = primary.rows.filter((r) => r.arm === 'intervention' && r.pretest !== null).length;
    await expect(main(page).getByRole('region', { name: 'Intervention arm', exact: true }).getByTestId('flow-analysed')).toContainText(`${formatCount(analysedIntervention)} students`);
    await expectAccessibleOnce(page);
    // The seed locks once every outcome sheet is accepted, so no note of classrooms left out stands beside the flow.
    const notAnalysed = await queryDatabase<{ n: number }>(
      `SELECT count(*)::int AS n FROM classrooms c WHERE c.study_id = $1 AND NOT EXISTS (
         SELECT 1 FROM runs r JOIN score_sheets sh ON sh.id = ANY (r.input_sheet_ids) JOIN comparisons k ON k.id = r.comparison_id
          WHERE r.id = $2 AND sh.classroom_id = c.id AND sh.wave_id = k.wave_id AND sh.measure_id = k.measure_id)`,
      [primary.study_id, primary.id],
    ).then(([r]) => r.n);
    if (notAnalysed > 0) await expect(page.getByTestId('open-sheets-note')).toContainText(`The result was locked while ${notAnalysed} of 24 classrooms had no accepted outcome sheet`);
    else await expect(page.getByTestId('open-sheets-note')).toHaveCount(0);
    await page.emulateMedia({ media: 'print' });
    await expect(page.getByRole('navigation', { name: 'Main' })).toBeHidden();
    await expect(page.getByRole('navigation', { name: 'Study' })).toBeHidden();
    await expect(page.getByTestId('breadcrumb')).toBeHidden();
    await expect(page.getByTestId('study-state')).toBeHidden();
    await expect(page.getByRole('button', { name: 'Print the report' })).toBeHidden();
    await expect(page.getByRole('heading', { name: 'Participant flow' })).toBeVisible();
    await expect(page.getByRole('img', { name: /^Effect sizes of \d+ comparisons/ })).toBeVisible();
    const shot = test.info().outputPath('study-report-print.png');
    await page.screenshot({ path: shot, fullPage: true });
    await test.info().attach('study report, print media', { path: shot, contentType: 'image/png' });
    await page.emulateMedia({ media: 'screen' });
  },
  async digests({ page }) {
    const outbox = table(page, 'Digests of this study');
    await expect(outbox.getByRole('row').filter({ hasText: 'principal1@evenhand.test' }).first()).toContainText('Sent');
    await expect(main(page).getByRole('region', { name: 'Weekly schedule' })).toBeVisible();
  },
  async audit({ page }) {
    const trail = main(page).getByRole('region', { name: 'Audit trail of this study' });
    await expect(bodyRows(trail.getByRole('table')).first()).toBeVisible();
  },
};

// ---------------------------------------------------------------------------------------------------------------

const scannedViews = new Set<string>();

/**
 * The axe check, once per distinct view: a screen that several roles see with the same controls in its content is
 * the same page, so it is scanned for the first of them; a role that sees other buttons, links or fields there gets
 * its own scan. Each role's home and study overview are always scanned, which covers its own navigation.
 */
async function expectAccessibleOnce(page: Page) {
  const view = await page.evaluate(() => {
    const path = location.pathname.replace(/[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/g, ':id');
    const inContent = [...document.querySelectorAll('main :is(button, a[href], input, select, textarea)')].filter((el) => !el.closest('nav'));
    const controls = inContent.map(
      (el) => `${el.tagName}:${el.getAttribute('aria-label') ?? el.textContent?.trim() ?? ''}`,
    );
    return `${path}|${controls.join('|')}`;
  });
  if (scannedViews.has(view)) return;
  await expectAccessible(page);
  scannedViews.add(view);
}

/** Presses Tab until the target has the focus, as someone without a mouse would. */
async function tabTo(page: Page, target: Locator, presses = 25) {
  for (let i = 0; i < presses; i++) {
    if (await target.evaluate((el) => el === document.activeElement)) return;
    await page.keyboard.press('Tab');
  }
  await expect(target).toBeFocused();
}

async function signInWithKeyboard(page: Page, email: string) {
  await page.goto('/sign-in');
  await tabTo(page, page.getByLabel('E-mail address'));
  await page.keyboard.type(email);
  await page.keyboard.press('Tab');
  await expect(page.getByLabel('Password', { exact: true })).toBeFocused();
  await page.keyboard.type(DEMO_PASSWORD);
  await page.keyboard.press('Enter');
  await expect(page).not.toHaveURL(/\/sign-in/);
}

let runs: LockedRun[] = [];
test.beforeAll(async () => {
  runs = await lockedRuns();
  expect(runs.length).toBeGreaterThan(0);
  expect(runs.filter((r) => r.is_primary)).toHaveLength(1);
});

for (const { role, email, label } of tour) {
  test(`the tour: ${label} signs in with the keyboard and opens every screen of their role`, async ({ page }) => {
    test.setTimeout(240_000); // the research lead's tour opens every screen of the demo study: allow a busy machine its time
    const grants = grantsOf(role);
    const mine: Area[] = navigationFor(grants);
    const home = mine.find((a) => a.path === homePathFor(grants))!;
    const visit: Visit = { page, role, runs };

    await test.step('sign in with the keyboard only', async () => {
      await signInWithKeyboard(page, email);
      await expect(page.getByRole('heading', { level: 1, name: home.label, exact: true })).toBeVisible();
      await expect(page.getByRole('navigation', { name: 'Main' }).getByRole('link')).toHaveText(mine.map((a) => a.label));
    });

    // Home first, then the rest in the navigation's order.
    for (const area of [home, ...mine.filter((a) => a !== home)]) {
      const key = (Object.keys(areas) as (keyof typeof areas)[]).find((k) => areas[k] === area)!;
      await test.step(`${area.label}${area === home ? ' (home)' : ''}`, async () => {
        if (area !== home) await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: area.label, exact: true }).click();
        await expect(page).toHaveURL(new RegExp(`${area.path}$`));
        await areaChecks[key]!(visit);
        await (area === home ? expectAccessible(page) : expectAccessibleOnce(page));
      });
    }

    const tabs = studyTabsFor(grants);
    if (tabs.length === 0) return;
    await test.step('open the demo study', async () => {
      await openDemoStudy(page);
      await expect(page.getByRole('navigation', { name: 'Study' }).getByRole('link')).toHaveText(tabs.map((t) => t.label));
    });
    for (const key of Object.keys(studyTabs) as StudyTab[]) {
      if (!tabs.includes(studyTabs[key])) continue;
      await test.step(`study tab ${studyTabs[key].label}`, async () => {
        await openTab(page, key);
        await tabChecks[key](visit);
        if (key === 'overview') await expectAccessible(page);
        else if (key !== 'comparisons') await expectAccessibleOnce(page);
      });
    }
  });
}

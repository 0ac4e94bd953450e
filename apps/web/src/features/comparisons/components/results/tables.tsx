import type { RunResults } from '@evenhand/entities';
import { FigureTable } from '@/components/ui/figure-table';
import { formatCount, formatInterval, formatNumber, formatP, formatSigned } from '@/lib/format';
import { iccSourceWords, testNames } from '@/lib/result-wording';
import { armLabels } from '@/lib/study';

/** n, mean, SD, SE and quartiles of the outcome in each arm. */
export function DescriptivesTable({ results }: { results: RunResults }) {
  return (
    <FigureTable
      caption={`${results.measure.name} at ${results.wave.name}, by arm`}
      columns={[
        { key: 'arm', header: 'Arm' },
        { key: 'students', header: 'Students', numeric: true },
        { key: 'classrooms', header: 'Classrooms', numeric: true },
        { key: 'mean', header: 'Mean', numeric: true },
        { key: 'sd', header: 'SD', numeric: true },
        { key: 'se', header: 'SE', numeric: true },
        { key: 'min', header: 'Lowest', numeric: true },
        { key: 'q1', header: 'Lower quartile', numeric: true },
        { key: 'median', header: 'Median', numeric: true },
        { key: 'q3', header: 'Upper quartile', numeric: true },
        { key: 'max', header: 'Highest', numeric: true },
      ]}
      rows={results.descriptives.map((d) => ({
        id: d.arm,
        arm: armLabels[d.arm],
        students: formatCount(d.students),
        classrooms: formatCount(d.classrooms),
        mean: formatNumber(d.mean, 2),
        sd: formatNumber(d.sd, 2),
        se: formatNumber(d.se, 2),
        min: formatNumber(d.quantiles?.min, 1),
        q1: formatNumber(d.quantiles?.q1, 1),
        median: formatNumber(d.quantiles?.median, 1),
        q3: formatNumber(d.quantiles?.q3, 1),
        max: formatNumber(d.quantiles?.max, 1),
      }))}
    />
  );
}

interface Check {
  id: string;
  name: string;
  what: string;
  difference: string;
  g: string;
  statistic: string;
  p: string;
}

function checksOf(r: RunResults): Check[] {
  const s = r.sensitivity;
  // The t tests over students share the student-level g; a two-level primary result has its own (adjusted) g.
  const studentG = s.studentLevelEffect ?? r.effectSize;
  const gText = `${formatNumber(studentG.g, 2)} ${formatInterval(studentG.ci, 2)}`;
  const tCheck = (id: string, t: typeof s.student, name: string, what: string): Check => ({
    id,
    name,
    what,
    difference: `${formatSigned(t.meanDifference, 2)} ${formatInterval(t.ci, 2)}`,
    g: gText,
    statistic: `t = ${formatNumber(t.t, 2)}, df = ${formatNumber(t.df, 1)}`,
    p: formatP(t.p),
  });
  const checks: Check[] = [];
  if (r.primary.test === 'two-level') {
    checks.push(
      tCheck('welch', s.welch, `${testNames.welch} over students`, 'Treats every student as if assigned on their own: it ignores the classrooms, so its p overstates the evidence.'),
    );
  } else if (r.primary.test !== 'student') {
    checks.push(tCheck('student', s.student, testNames.student, 'Uses one shared spread for both arms.'));
  } else {
    checks.push(tCheck('welch', s.welch, testNames.welch, 'Lets each arm keep its own spread.'));
  }
  if (s.clusterRobust) {
    const c = s.clusterRobust;
    checks.push({
      id: 'cluster-robust',
      name: 'Least squares with cluster-robust errors (CR2)',
      what: `The same adjustment as the model, with standard errors that allow for ${formatCount(c.units.intervention + c.units.comparison)} assigned units without modelling them (small-sample degrees of freedom).`,
      difference: `${formatSigned(c.estimate, 2)} ${formatInterval(c.ci, 2)}`,
      g: '—',
      statistic: `t = ${formatNumber(c.t, 2)}, df = ${formatNumber(c.df, 1)}`,
      p: formatP(c.p),
    });
  }
  if (r.clustering && r.primary.test === 'two-level') {
    const c = r.clustering;
    checks.push({
      id: 'clustering-correction',
      name: 'Welch’s t with the clustering correction',
      what: `The t test over students widened for an ICC of ${formatNumber(c.icc, 2)} (${iccSourceWords[c.iccSource]}), as an evidence reviewer would (Hedges 2007).`,
      difference: `${formatSigned(r.sensitivity.welch.meanDifference, 2)} ${c.ci ? formatInterval(c.ci, 2) : ''}`,
      g: gText,
      statistic: `t = ${formatNumber(c.tAdjusted, 2)}, degrees of freedom ${formatNumber(c.df, 1)}`,
      p: formatP(c.p),
    });
  }
  if (s.mannWhitney) {
    checks.push({
      id: 'mann-whitney',
      name: 'Mann–Whitney U test',
      what: 'Compares ranks, not means: robust to skewed scores and outliers.',
      difference: '—',
      g: gText,
      statistic: `U = ${formatNumber(s.mannWhitney.u, 1)}, z = ${formatNumber(s.mannWhitney.z, 2)}`,
      p: formatP(s.mannWhitney.p),
    });
  }
  if (s.ancova) {
    checks.push({
      id: 'ancova',
      name: 'Adjusted for the baseline score (ANCOVA)',
      what: `The difference between students with the same pretest score (${formatCount(s.ancova.n)} students with both scores).`,
      difference: `${formatSigned(s.ancova.adjustedDifference, 2)} ${formatInterval(s.ancova.ci, 2)}`,
      g: formatNumber(s.ancova.g, 2),
      statistic: `t = ${formatNumber(s.ancova.t, 2)}, df = ${formatNumber(s.ancova.df, 0)}`,
      p: formatP(s.ancova.p),
    });
  }
  if (s.classroomMeans) {
    const c = s.classroomMeans;
    checks.push({
      id: 'classroom-means',
      name: 'Classroom averages',
      what: `Welch’s t test on ${c.classrooms1} intervention and ${c.classrooms2} comparison classroom averages: each classroom counts once.`,
      difference: `${formatSigned(c.meanDifference, 2)} ${formatInterval(c.ci, 2)}`,
      g: 'not defined',
      statistic: `t = ${formatNumber(c.t, 2)}, df = ${formatNumber(c.df, 1)}`,
      p: formatP(c.p),
    });
  }
  return checks;
}

/** The sensitivity checks: other reasonable analyses of the same data, each with its estimate and p. */
export function SensitivityTable({ results }: { results: RunResults }) {
  const checks = checksOf(results);
  return (
    <div className="space-y-2">
      <FigureTable
        caption="Sensitivity checks"
        hideCaption
        columns={[
          { key: 'name', header: 'Check' },
          { key: 'difference', header: 'Difference (95% CI)', numeric: true },
          { key: 'g', header: 'Hedges’ g (95% CI)', numeric: true },
          { key: 'statistic', header: 'Statistic', numeric: true },
          { key: 'p', header: 'p', numeric: true },
        ]}
        rows={checks.map((c) => ({
          id: c.id,
          name: (
            <>
              {c.name}
              <span className="block font-normal text-ink-muted">{c.what}</span>
            </>
          ),
          difference: c.difference,
          g: c.g,
          statistic: c.statistic,
          p: c.p,
        }))}
      />
      <p className="max-w-prose text-sm text-ink-muted">
        When these agree with the primary result, the conclusion does not hang on one choice of test. The t tests over students share the
        student-level effect size; the cluster-robust and classroom-average differences are in score units only.
      </p>
      {(results.sensitivity.notComputed ?? []).length > 0 && (
        <ul className="list-disc space-y-1 pl-5 text-sm">
          {(results.sensitivity.notComputed ?? []).map((n) => (
            <li key={n.check}>
              Not computed — {n.check}: {n.why}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

/** Variance and normality diagnostics: what the tests assume, and whether the data look like it. */
export function DiagnosticsTable({ results }: { results: RunResults }) {
  const d = results.diagnostics;
  const rows: { id: string; check: string; statistic: string; df: string; p: string }[] = [];
  if (d.leveneMean) {
    rows.push({ id: 'levene', check: 'Levene (centred on the mean)', statistic: `W = ${formatNumber(d.leveneMean.statistic, 2)}`, df: `${d.leveneMean.df1}, ${d.leveneMean.df2}`, p: formatP(d.leveneMean.p) });
  }
  if (d.leveneMedian) {
    rows.push({ id: 'brown-forsythe', check: 'Brown–Forsythe (centred on the median)', statistic: `W = ${formatNumber(d.leveneMedian.statistic, 2)}`, df: `${d.leveneMedian.df1}, ${d.leveneMedian.df2}`, p: formatP(d.leveneMedian.p) });
  }
  if (d.varianceRatio) {
    rows.push({
      id: 'variance-ratio',
      check: 'Variance ratio (intervention ÷ comparison)',
      statistic: `F = ${formatNumber(d.varianceRatio.f, 2)}`,
      df: `${d.varianceRatio.df1}, ${d.varianceRatio.df2}`,
      p: formatP(d.varianceRatio.p),
    });
  }
  for (const s of d.shapiroWilk ?? []) {
    rows.push({ id: `shapiro-${s.arm}`, check: `Shapiro–Wilk, ${armLabels[s.arm].toLowerCase()} arm`, statistic: `W = ${formatNumber(s.w, 3)}`, df: '—', p: formatP(s.p) });
  }
  return (
    <div className="space-y-2">
      <FigureTable
        caption="Diagnostics"
        hideCaption
        columns={[
          { key: 'check', header: 'Check' },
          { key: 'statistic', header: 'Statistic', numeric: true },
          { key: 'df', header: 'df', numeric: true },
          { key: 'p', header: 'p', numeric: true },
        ]}
        rows={rows}
      />
      <p className="max-w-prose text-sm text-ink-muted">
        A small p in the first three rows says the arms’ scores spread differently; Welch’s t test allows for that, which is why it is the
        default. A small Shapiro–Wilk p says the scores are not normally distributed; with dozens of students per arm the t tests remain
        reliable, and the Mann–Whitney check does not assume normality.
      </p>
      {d.notes.length > 0 && (
        <ul className="list-disc space-y-1 pl-5 text-sm">
          {d.notes.map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      )}
    </div>
  );
}

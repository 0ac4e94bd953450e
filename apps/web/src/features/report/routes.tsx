import type { Accounting, MeasureChecks, PlanVersion } from '@evenhand/entities';
import type { QueryClient } from '@tanstack/react-query';
import type { ReactNode } from 'react';
import { Link, type LoaderFunctionArgs } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { EmptyState } from '@/components/ui/empty-state';
import { FigureTable } from '@/components/ui/figure-table';
import { comparisonsQueryOptions, runQueryOptions } from '@/features/comparisons/api';
import { planQueryOptions } from '@/features/plan/api';
import { reportedRunIds, useStudyReport, type StudyReport } from '@/features/report/api';
import { EvidenceSection } from '@/features/report/components/evidence-section';
import { FlowDiagram } from '@/features/report/components/flow-diagram';
import { EffectSizeChart, ResultsTable } from '@/features/report/components/results-summary';
import { classroomsWithoutReadSheet, totalAccount } from '@/lib/accounting';
import { formatAlpha, formatCount, formatDateTime, formatInterval, formatNumber, formatPercent } from '@/lib/format';
import { studyPath } from '@/lib/navigation';
import { fieldLabel, formatPlanValue } from '@/lib/plan-labels';
import { measuresQueryOptions, studyChecksQueryOptions, studyEvidenceQueryOptions, wavesQueryOptions } from '@/lib/queries';
import { effectSizeWords, iccSourceWords, resultHeadline, testNames } from '@/lib/result-wording';
import { runPath } from '@/lib/results';
import { unitLabels, useCurrentStudy, useStudyId } from '@/lib/study';

export function reportLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    const studyId = params.studyId!;
    await Promise.all([
      queryClient.ensureQueryData(planQueryOptions(studyId)),
      queryClient
        .ensureQueryData(comparisonsQueryOptions(studyId))
        .then(({ items }) => Promise.all(reportedRunIds(items).map((runId) => queryClient.ensureQueryData(runQueryOptions(runId))))),
      queryClient.ensureQueryData(studyChecksQueryOptions(studyId)),
      queryClient.ensureQueryData(measuresQueryOptions(studyId)),
      queryClient.ensureQueryData(wavesQueryOptions(studyId)),
      queryClient.ensureQueryData(studyEvidenceQueryOptions(studyId)),
    ]);
    return null;
  };
}

function ReportSection({ id, title, children }: { id: string; title: string; children: ReactNode }) {
  return (
    <section aria-labelledby={id} className="report-section space-y-4">
      <h3 id={id} className="text-2xl font-semibold tracking-tight">
        {title}
      </h3>
      {children}
    </section>
  );
}

const bandWords = { satisfies: 'Equivalent', 'requires-adjustment': 'Equivalent if adjusted', fails: 'Not equivalent' } as const;

function BaselineTable({ measures }: { measures: MeasureChecks[] }) {
  const rows = measures.filter((m) => m.baselineEquivalence);
  if (rows.length === 0) return <p className="text-ink-muted">No measure has baseline and outcome scores in both arms yet.</p>;
  const meanSd = (x: { mean: number; sd: number }) => `${formatNumber(x.mean, 1)} (${formatNumber(x.sd, 1)})`;
  return (
    <FigureTable
      caption="Baseline scores per arm (students who also have an outcome score): n, mean (SD)"
      columns={[
        { key: 'measure', header: 'Measure' },
        { key: 'n1', header: 'Intervention n', numeric: true },
        { key: 'm1', header: 'Intervention mean (SD)', numeric: true },
        { key: 'n2', header: 'Comparison n', numeric: true },
        { key: 'm2', header: 'Comparison mean (SD)', numeric: true },
        { key: 'g', header: 'Hedges’ g (95% CI)', numeric: true },
        { key: 'band', header: 'Baseline equivalence' },
      ]}
      rows={rows.map((m) => {
        const b = m.baselineEquivalence!;
        return {
          id: m.measureId,
          measure: m.measureName,
          n1: formatCount(b.intervention.n),
          m1: meanSd(b.intervention),
          n2: formatCount(b.comparison.n),
          m2: meanSd(b.comparison),
          g: `${formatNumber(b.g, 2)} ${formatInterval(b.ci, 2)}`,
          band: bandWords[b.band],
        };
      })}
    />
  );
}

/** Each measure's accounting: its pre-specified comparison's reported run's (what it read), else the Checks' (the sheets today). */
function accountings(report: StudyReport): { measureId: string; measureName: string; accounting: Accounting }[] {
  return report.checks.measures.flatMap((m) => {
    const reported = report.comparisons.find((c) => c.comparison.prespecified && c.comparison.measureId === m.measureId && c.comparison.waveId === report.checks.outcomeWaveId);
    const accounting = reported?.run?.results?.accounting ?? m.accounting;
    return accounting ? [{ measureId: m.measureId, measureName: m.measureName, accounting }] : [];
  });
}

function AttritionTable({ report }: { report: StudyReport }) {
  const rating = (band: 'low' | 'high') => (band === 'low' ? 'low' : 'high');
  const rows = accountings(report);
  if (!rows.some((m) => m.accounting.attrition.students || m.accounting.attrition.classrooms)) {
    return <p className="text-ink-muted">Attrition can be worked out once both arms have classrooms and students randomised.</p>;
  }
  return (
    <FigureTable
      caption="Attrition against the published boundaries (cautious / optimistic), from the same counts as the flow"
      columns={[
        { key: 'measure', header: 'Measure' },
        { key: 'unit', header: 'Unit' },
        { key: 'randomised', header: 'Randomised', numeric: true },
        { key: 'analysed', header: 'Analysed', numeric: true },
        { key: 'overall', header: 'Overall', numeric: true },
        { key: 'differential', header: 'Differential', numeric: true },
        { key: 'rating', header: 'Rating (cautious / optimistic)' },
      ]}
      rows={rows.flatMap((m) =>
        (['students', 'classrooms'] as const).flatMap((unit) => {
          const a = m.accounting.attrition[unit];
          if (!a) return [];
          const interpolated = a.cautious.interpolated || a.optimistic.interpolated;
          const total = totalAccount(m.accounting, unit);
          return [
            {
              id: `${m.measureId}-${unit}`,
              measure: m.measureName,
              unit: unit === 'students' ? 'Students' : 'Classrooms',
              randomised: formatCount(total.randomised),
              analysed: formatCount(total.analysed),
              overall: formatPercent(a.overall),
              differential: `${formatNumber(a.differential, 1)} pp`,
              rating: `${rating(a.cautious.band)} / ${rating(a.optimistic.band)}${interpolated ? ' (boundary interpolated between the handbook’s listed rows)' : ''}`,
            },
          ];
        }),
      )}
    />
  );
}

function Registration({ versions, refs }: { versions: PlanVersion[]; refs: StudyReport['refs'] }) {
  const sorted = [...versions].sort((a, b) => a.version - b.version);
  const sealed = sorted[0];
  const amendments = sorted.slice(1);
  if (!sealed) return <p>The plan has not been sealed: nothing is registered yet.</p>;
  return (
    <div className="space-y-4">
      <p>
        The plan was sealed on <strong>{formatDateTime(sealed.createdAt)}</strong> by {sealed.createdBy.name}. Version{' '}
        {sorted[sorted.length - 1].version} is in force.
      </p>
      <FigureTable
        caption="Plan versions and their SHA-256"
        columns={[
          { key: 'version', header: 'Version' },
          { key: 'when', header: 'Recorded' },
          { key: 'what', header: 'What changed' },
          { key: 'sha', header: 'SHA-256' },
        ]}
        rows={sorted.map((v) => ({
          id: String(v.version),
          version: `v${v.version}`,
          when: formatDateTime(v.createdAt),
          what:
            v.reason === null ? (
              'Sealed original'
            ) : (
              <>
                <span className="block">Amendment: {v.reason}</span>
                {v.changes.length > 0 && (
                  <ul className="mt-1 list-disc pl-5 text-ink-muted">
                    {v.changes.map((c) => (
                      <li key={c.field}>
                        {fieldLabel(c.field)}: {formatPlanValue(c.field, c.from, refs)} → {formatPlanValue(c.field, c.to, refs)}
                      </li>
                    ))}
                  </ul>
                )}
              </>
            ),
          sha: <code className="font-mono text-xs break-all">{v.sha256}</code>,
        }))}
      />
      {amendments.length === 0 && <p className="text-ink-muted">The plan has not been amended since it was sealed.</p>}
    </div>
  );
}

/** Locking does not wait for sheets that are not accepted: the report says how many classrooms that left out. */
function OpenSheetsNote({ accounting, locked }: { accounting: Accounting; locked: boolean }) {
  const allocated = totalAccount(accounting, 'classrooms').randomised;
  const left = classroomsWithoutReadSheet(accounting);
  if (left === 0) return null;
  return (
    <p className="max-w-prose" data-testid="open-sheets-note">
      {locked ? 'The result was locked while' : 'When this run was made,'} {left} of {allocated} classrooms had no accepted outcome sheet (never
      entered, not submitted, returned to the teacher or awaiting review). Evenhand lets a result be locked without them; they are counted as not
      analysed, each under its reason above.
    </p>
  );
}

function primaryOf(report: StudyReport) {
  return report.comparisons.find((c) => c.comparison.isPrimary) ?? report.comparisons.find((c) => c.comparison.prespecified) ?? null;
}

/** The printable study report: flow, baseline, every result with its effect size, registration and cautions. */
export function StudyReportPage() {
  const studyId = useStudyId();
  const study = useCurrentStudy();
  const report = useStudyReport(studyId);
  const plan = report.plan.versions.length ? [...report.plan.versions].sort((a, b) => b.version - a.version)[0].content : null;
  const primary = primaryOf(report);
  const primaryResults = primary?.run?.results ?? null;
  const prespecified = report.comparisons.filter((c) => c.comparison.prespecified);
  const exploratory = report.comparisons.filter((c) => !c.comparison.prespecified);
  const allLocked = prespecified.length > 0 && prespecified.every((c) => c.run?.state === 'locked');
  const confirmatory = prespecified.filter((c) => c.run?.kind === 'confirmatory');
  const cautions = [...new Set(report.comparisons.flatMap((c) => c.run?.results?.cautions ?? []))].filter((c) => !c.startsWith('Interim'));
  const clustering = primaryResults?.clustering ?? null;
  const model = primaryResults?.primary.test === 'two-level' ? (primaryResults.twoLevel ?? null) : null;

  return (
    <article aria-labelledby="report-title" className="study-report space-y-12">
      <header className="flex flex-wrap items-start justify-between gap-4">
        <div>
          <h2 id="report-title" className="text-3xl font-semibold tracking-tight">
            Study report
          </h2>
          <p className="mt-1 text-ink-muted">Prepared {formatDateTime(new Date().toISOString())} from Evenhand.</p>
        </div>
        <div className="flex flex-wrap items-center gap-4 print:hidden">
          <Link to={studyPath(studyId, 'comparisons')}>Back to the comparisons</Link>
          <Button onClick={() => window.print()}>Print the report</Button>
        </div>
      </header>

      {plan && !allLocked && (
        <Alert tone="info" title="Not final">
          {prespecified.length === 0
            ? 'The plan has no pre-specified comparisons yet.'
            : 'Some pre-specified comparisons have no locked result yet: where a result is not locked, the report shows the latest finished run, which may still change.'}
        </Alert>
      )}

      <ReportSection id="report-study" title="The study">
        <dl className="grid gap-4 sm:grid-cols-2">
          <div>
            <dt className="font-semibold">Intervention</dt>
            <dd>{study.intervention}</dd>
          </div>
          <div>
            <dt className="font-semibold">Comparison condition</dt>
            <dd>{study.comparisonCondition}</dd>
          </div>
          {plan && (
            <>
              <div className="sm:col-span-2">
                <dt className="font-semibold">Hypothesis</dt>
                <dd>{plan.hypothesis}</dd>
              </div>
              <div>
                <dt className="font-semibold">Primary test</dt>
                <dd>
                  {testNames[plan.primaryTest]}, {plan.alternative}, alpha {formatAlpha(plan.alpha)}; smallest effect of interest g ={' '}
                  {formatNumber(plan.smallestEffectOfInterest, 2)}
                </dd>
              </div>
              <div>
                <dt className="font-semibold">Planned sample</dt>
                <dd>
                  {formatCount(plan.plannedSites)} sites, {formatCount(plan.plannedClassrooms)} classrooms, about{' '}
                  {formatCount(plan.plannedStudentsPerClassroom)} students per classroom
                </dd>
              </div>
            </>
          )}
        </dl>
      </ReportSection>

      {!plan ? (
        <EmptyState title="Nothing to report yet">
          <p>The report follows the sealed plan: its flow, baseline table and results appear once the plan is sealed and the comparisons have run.</p>
        </EmptyState>
      ) : (
        <>
          <ReportSection id="report-flow" title="Participant flow">
            {primaryResults?.accounting && primary?.run ? (
              <>
                <FlowDiagram
                  study={study}
                  accounting={primaryResults.accounting}
                  source={`From the ${primary.run.state === 'locked' ? 'locked' : 'latest finished'} run of ${primary.comparison.label}, as it read the data.`}
                />
                <OpenSheetsNote accounting={primaryResults.accounting} locked={primary.run.state === 'locked'} />
              </>
            ) : (
              <p className="text-ink-muted">
                {primaryResults
                  ? 'The primary comparison’s result was made before Evenhand recorded who was analysed and why the others were not; run it again to draw the flow.'
                  : 'The flow is drawn from the primary comparison’s result, which has no finished run yet.'}
              </p>
            )}
            <AttritionTable report={report} />
          </ReportSection>

          <ReportSection id="report-baseline" title="The arms at baseline">
            <BaselineTable measures={report.checks.measures} />
            <p className="max-w-prose text-sm text-ink-muted">
              Equivalent: |g| ≤ 0.05. Equivalent if adjusted: 0.05 &lt; |g| ≤ 0.25, provided the analysis adjusts for the baseline score. Not
              equivalent: |g| &gt; 0.25.
            </p>
          </ReportSection>

          <ReportSection id="report-results" title="Results">
            {primaryResults && primary && (
              <div className="rounded-lg border border-accent/50 bg-surface p-5">
                <h4 className="font-semibold">Primary outcome: {primary.comparison.label}</h4>
                <p className="mt-2 max-w-prose">{resultHeadline(primaryResults).finding}</p>
                <p className="mt-1 max-w-prose font-semibold">{resultHeadline(primaryResults).verdict}</p>
                <p className="mt-1 max-w-prose">
                  {effectSizeWords(primaryResults)}.{' '}
                  <Link to={runPath(studyId, primary.run!.id)} className="print:hidden">
                    Read the full result
                  </Link>
                </p>
              </div>
            )}
            <ResultsTable items={[...prespecified, ...exploratory]} />
            <EffectSizeChart items={[...prespecified, ...exploratory]} />
            <div className="space-y-2">
              <h4 className="font-semibold">Pre-specified and exploratory</h4>
              <p className="max-w-prose">
                {prespecified.length} {prespecified.length === 1 ? 'comparison was' : 'comparisons were'} pre-specified in the sealed plan
                {exploratory.length > 0
                  ? `; ${exploratory.length} ${exploratory.length === 1 ? 'was' : 'were'} added afterwards and are exploratory: they can suggest questions for another study but do not test the registered hypothesis.`
                  : '; none was added afterwards.'}
              </p>
              <h4 className="pt-2 font-semibold">Multiple comparisons</h4>
              <p className="max-w-prose">
                {confirmatory.length > 1
                  ? `The study tests ${confirmatory.length} pre-specified measures, which raises the chance that one looks significant by luck. The Benjamini–Hochberg adjustment across them is shown beside each p-value; read the unadjusted p-values with that in mind.`
                  : confirmatory.length === 1
                    ? 'The study has one confirmatory comparison, so no adjustment for multiple comparisons applies.'
                    : 'No confirmatory comparison has finished yet.'}{' '}
                Exploratory comparisons are not adjusted and are not part of the confirmatory result.
              </p>
            </div>
          </ReportSection>

          <ReportSection id="report-clustering" title="How clustering was handled">
            <p className="max-w-prose">
              The draw assigned whole {unitLabels[study.unitOfAssignment].plural} to the arms
              {study.unitOfAssignment === 'classroom' ? ', blocked by site' : ''}
              {model
                ? `. The registered analysis is the two-level model: students nested in the ${model.units.intervention + model.units.comparison} assigned ${
                    model.unit === 'school' ? 'schools' : 'classrooms'
                  } with a random intercept for each${model.blocks > 0 ? `, the ${model.blocks} schools of the draw as blocks` : ''}${
                    model.covariate === 'baseline' ? ' and the pretest as a covariate' : ''
                  }, fitted by restricted maximum likelihood with Satterthwaite degrees of freedom. It estimates a between-${model.unit} variance of ${formatNumber(
                    model.tau2,
                    2,
                  )} and a within-${model.unit} variance of ${formatNumber(model.sigma2, 2)}: an intraclass correlation of ${formatNumber(model.icc, 2)}.${
                    clustering
                      ? ` As sensitivity checks, the same regression with cluster-robust (CR2) errors, and Welch’s t over students with the clustering correction (Hedges, 2007; ICC ${formatNumber(clustering.icc, 2)}, ${iccSourceWords[clustering.iccSource]}), are reported with the results.`
                      : ''
                  }`
                : `, and the primary test compares ${(primary?.comparison.unitOfAnalysis ?? plan?.unitOfAnalysis) === 'student' ? 'students' : 'classroom or school averages'}.`}
              {!model &&
                (clustering
                  ? ` Because students in one classroom resemble each other, the significance is also given corrected for clustering (Hedges, 2007), using an intraclass correlation (ICC) of ${formatNumber(
                      clustering.icc,
                      2,
                    )}, ${iccSourceWords[clustering.iccSource]}${
                      clustering.observedIcc !== null ? `; the ICC observed in these data is ${formatNumber(clustering.observedIcc, 2)}` : ''
                    }. The average classroom has ${formatNumber(clustering.averageClusterSize, 1)} analysed students, a design effect of ${formatNumber(
                      clustering.designEffect,
                      2,
                    )}.`
                  : primaryResults
                    ? ' No clustering correction applies to this design.'
                    : ' How clustering affects the result is reported once the primary comparison has a finished run.')}
            </p>
            {plan && (
              <p className="max-w-prose text-ink-muted">
                The plan sized the study for {formatCount(plan.plannedClassrooms)} classrooms of about {formatCount(plan.plannedStudentsPerClassroom)}{' '}
                students, with the ICC taken from {plan.iccSource === 'assumed' && plan.icc !== null ? `an assumed value of ${formatNumber(plan.icc, 2)}` : plan.iccSource === 'observed' ? 'the data' : 'the standard default'}.
              </p>
            )}
          </ReportSection>

          <ReportSection id="report-evidence" title="Will it count as evidence?">
            <EvidenceSection studyId={studyId} />
          </ReportSection>

          <ReportSection id="report-registration" title="Registration and amendments">
            <Registration versions={report.plan.versions} refs={report.refs} />
          </ReportSection>

          <ReportSection id="report-cautions" title="Cautions">
            <ul className="list-disc space-y-2 pl-5">
              {cautions.map((c) => (
                <li key={c}>{c}</li>
              ))}
              <li>Exploratory comparisons and monitoring checks are not the study’s result.</li>
            </ul>
          </ReportSection>
        </>
      )}
    </article>
  );
}

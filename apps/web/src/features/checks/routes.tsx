import type { MeasureChecks } from '@evenhand/entities';
import { useSuspenseQuery, type QueryClient } from '@tanstack/react-query';
import type { LoaderFunctionArgs } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { EmptyState } from '@/components/ui/empty-state';
import { studyChecksQueryOptions } from '@/lib/queries';
import { AttritionPanel, type ArmCounts } from '@/features/checks/components/attrition-panel';
import { BaselinePanel } from '@/features/checks/components/baseline-panel';
import { BoxPlots } from '@/features/checks/components/box-plots';
import { DataQualityTable } from '@/features/checks/components/data-quality-table';
import { EvidenceRisks } from '@/features/checks/components/evidence-risks';
import { armAccount, lossLines } from '@/lib/accounting';
import { armLabels, useStudyId } from '@/lib/study';

export function checksLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await queryClient.ensureQueryData(studyChecksQueryOptions(params.studyId!));
    return null;
  };
}

function armCounts(measure: MeasureChecks, unit: 'students' | 'classrooms'): ArmCounts | null {
  const a = measure.accounting;
  if (!a) return null;
  const of = (arm: 'intervention' | 'comparison') => ({ randomised: armAccount(a, arm, unit).randomised, analysed: armAccount(a, arm, unit).analysed });
  const words: [string, string] = unit === 'students' ? ['student', 'students'] : ['classroom', 'classrooms'];
  const lost = (['intervention', 'comparison'] as const).flatMap((arm) => lossLines(armAccount(a, arm, unit), words).map((l) => `${armLabels[arm]}: ${l}`));
  return { intervention: of('intervention'), comparison: of('comparison'), lost };
}

function MeasureSection({ measure, quasiExperimental }: { measure: MeasureChecks; quasiExperimental: boolean }) {
  const headingId = `measure-${measure.measureId}`;
  return (
    <section aria-labelledby={headingId} className="space-y-6 border-t border-line pt-8 first-of-type:border-t-0 first-of-type:pt-0">
      <h2 id={headingId} className="text-2xl font-semibold tracking-tight">
        {measure.measureName}
      </h2>

      <div className="space-y-3">
        <h3 className="text-xl font-semibold">Data quality</h3>
        <DataQualityTable measure={measure} />
      </div>

      <div className="space-y-3">
        <h3 className="text-xl font-semibold">Attrition</h3>
        <p className="max-w-prose text-ink-muted">
          Attrition is the share of the randomised sample not analysed: a student is analysed with an outcome score on an accepted sheet
          {measure.accounting?.needsPretest ? ' and a pretest score, which the analysis adjusts for' : ''}, and each one who is not is
          counted under one reason.{' '}
          {measure.accountingRunId
            ? 'These are the locked result’s counts, as it read the data; the report and its bundle show the same.'
            : 'These counts follow the sheets as they stand today; a locked result keeps the counts it read.'}{' '}
          The published standards judge the difference between
          the arms against two boundaries: the <strong className="text-ink">cautious</strong> one applies when the intervention could
          plausibly affect who leaves the study, the <strong className="text-ink">optimistic</strong> one when that is unlikely. Decide
          which applies from the intervention, not from these numbers.
        </p>
        {/* A grid item is as wide as its widest table unless allowed to shrink: then the table scrolls in its own frame on a phone. */}
        <div className="grid gap-4 xl:grid-cols-2 [&>*]:min-w-0">
          <AttritionPanel title="Students" unit={['student', 'students']} attrition={measure.accounting?.attrition.students ?? null} counts={armCounts(measure, 'students')} />
          <AttritionPanel
            title="Classrooms"
            unit={['classroom', 'classrooms']}
            attrition={measure.accounting?.attrition.classrooms ?? null}
            counts={armCounts(measure, 'classrooms')}
          />
        </div>
      </div>

      <div className="space-y-3">
        <h3 className="text-xl font-semibold">Baseline equivalence</h3>
        <BaselinePanel measure={measure} quasiExperimental={quasiExperimental} />
      </div>

      <div className="space-y-3">
        <h3 className="text-xl font-semibold">Score distributions</h3>
        <BoxPlots measure={measure} />
      </div>
    </section>
  );
}

/** The research lead's checks before comparing: completeness, attrition, baseline equivalence and box plots, per measure. */
export function ChecksPage() {
  const studyId = useStudyId();
  const { data: checks } = useSuspenseQuery(studyChecksQueryOptions(studyId));
  return (
    <>
      <p className="mb-8 max-w-prose text-ink-muted">
        Whether the data are complete and the arms still comparable, measure by measure, before any comparison is read.
      </p>
      {checks.quasiExperimental && (
        <div className="mb-8">
          <Alert tone="info" title="Quasi-experimental study">
            A classroom was reassigned by hand after the random draw, so the arms were not formed entirely at random. Baseline equivalence
            must be shown for every measure before a result is read as the intervention’s effect.
          </Alert>
        </div>
      )}
      <div className="mb-12">
        <EvidenceRisks studyId={studyId} />
      </div>
      {checks.measures.length === 0 ? (
        <EmptyState title="No measures yet">
          <p>Checks appear once the plan names its measures and teachers start entering scores.</p>
        </EmptyState>
      ) : (
        <>
          {checks.measures.length > 1 && (
            <nav aria-label="Measures on this page" className="mb-8">
              <ul className="flex flex-wrap gap-x-6 gap-y-2">
                {checks.measures.map((m) => (
                  <li key={m.measureId}>
                    <a href={`#measure-${m.measureId}`}>{m.measureName}</a>
                  </li>
                ))}
              </ul>
            </nav>
          )}
          <div className="space-y-12">
            {checks.measures.map((m) => (
              <MeasureSection key={m.measureId} measure={m} quasiExperimental={checks.quasiExperimental} />
            ))}
          </div>
        </>
      )}
    </>
  );
}

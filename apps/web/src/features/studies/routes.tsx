import { idSchema, studiesQuerySchema, type RoleGrant, type Study } from '@evenhand/entities';
import { useQuery, type QueryClient } from '@tanstack/react-query';
import { useState, type ReactNode } from 'react';
import {
  data,
  NavLink,
  Outlet,
  redirect,
  useLocation,
  useNavigate,
  useSearchParams,
  type LoaderFunctionArgs,
  type ShouldRevalidateFunction,
} from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { EmptyState } from '@/components/ui/empty-state';
import { PageHeader } from '@/components/ui/page-header';
import { useSession } from '@/features/auth/api';
import { useStartStudy } from '@/features/studies/api';
import { NextSteps, nextStepsFor } from '@/features/studies/components/next-steps';
import { StartStudyForm } from '@/features/studies/components/start-study-form';
import { StudiesTable } from '@/features/studies/components/studies-table';
import { StudyBadges, StudyStatusSteps } from '@/features/studies/components/study-status';
import { formatDate, formatDateTime } from '@/lib/format';
import { hasRole, studyPath, studyTabs, studyTabsFor } from '@/lib/navigation';
import { studiesQueryOptions, studyQueryOptions, studyStatusLabels, unitLabels, useCurrentStudy, type StudiesFilter } from '@/lib/study';

const PAGE_SIZE = 25;

function filterFromSearch(params: URLSearchParams): StudiesFilter {
  const page = Math.max(1, Math.floor(Number(params.get('page'))) || 1);
  const parsed = studiesQuerySchema.safeParse({ status: params.get('state') || undefined, limit: PAGE_SIZE, offset: (page - 1) * PAGE_SIZE });
  return parsed.success ? parsed.data : { limit: PAGE_SIZE, offset: 0 };
}

function searchFromFilter(filter: StudiesFilter): Record<string, string> {
  const search: Record<string, string> = {};
  if (filter.status) search.state = filter.status;
  if (filter.offset > 0) search.page = String(filter.offset / filter.limit + 1);
  return search;
}

export function studiesLoader(queryClient: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await queryClient.ensureQueryData(studiesQueryOptions(filterFromSearch(new URL(request.url).searchParams)));
    return null;
  };
}

/** Filtering and paging re-query through the table, which keeps the old rows visible meanwhile. */
export const studiesShouldRevalidate: ShouldRevalidateFunction = ({ currentUrl, nextUrl }) => currentUrl.pathname !== nextUrl.pathname;

function useGrants(): readonly RoleGrant[] {
  return useSession().data?.roles ?? [];
}

function NoStudiesYet({ canStart }: { canStart: boolean }) {
  return (
    <EmptyState title="No studies yet">
      {canStart ? (
        <p>
          Start a study to test one intervention against a comparison condition. The research lead then adds its measures and
          waves and seals its plan; the coordinator enrols schools and classrooms and runs the draw.
        </p>
      ) : (
        <p>
          Studies appear here once the research lead or the coordinator starts one. You can read a study’s sealed plan, its draw
          and its results from here.
        </p>
      )}
    </EmptyState>
  );
}

/** `toDo`: what waits for the person, shown under the title when this is their home (composed in app/router.tsx). */
export function StudiesPage({ toDo }: { toDo?: ReactNode }) {
  const grants = useGrants();
  const navigate = useNavigate();
  const [params, setParams] = useSearchParams();
  const filter = filterFromSearch(params);
  const studies = useQuery(studiesQueryOptions(filter));
  const start = useStartStudy();
  const [starting, setStarting] = useState(false);
  const canStart = hasRole(grants, 'research_lead', 'coordinator');
  const nothingAtAll = studies.data?.total === 0 && !filter.status;

  return (
    <>
      <PageHeader
        title="Studies"
        description="Each study tests one intervention against a comparison condition, across the district’s schools."
        actions={canStart && <Button onClick={() => setStarting(true)}>Start a study</Button>}
      />
      {toDo}
      {nothingAtAll ? (
        <NoStudiesYet canStart={canStart} />
      ) : (
        <StudiesTable
          page={studies.data}
          loading={studies.isPending}
          refreshing={studies.isPlaceholderData}
          error={studies.error}
          filter={filter}
          onFilterChange={(changes) => setParams(searchFromFilter({ ...filter, ...changes }))}
        />
      )}
      <Dialog
        open={starting}
        title="Start a study"
        description="Describe what is compared. You can change these until the plan is sealed."
        onClose={() => setStarting(false)}
      >
        <StartStudyForm
          onCancel={() => setStarting(false)}
          onStart={async (input) => {
            const study = await start.mutateAsync(input);
            setStarting(false);
            navigate(studyPath(study.id, 'overview'));
          }}
        />
      </Dialog>
    </>
  );
}

/** Warms the study for the layout and every tab; an address that is no study's ID is simply not found. */
export function studyLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    if (!idSchema.safeParse(params.studyId).success) throw data(null, { status: 404 });
    await queryClient.ensureQueryData(studyQueryOptions(params.studyId!));
    return null;
  };
}

/** /studies/:studyId opens the Overview. */
export function studyIndexLoader({ params }: LoaderFunctionArgs) {
  return redirect(studyPath(params.studyId!, 'overview'));
}

function StudyNavigation({ study, grants }: { study: Study; grants: readonly RoleGrant[] }) {
  return (
    <nav aria-label="Study" className="mb-8 border-b border-line">
      <ul className="-mb-px flex flex-wrap gap-x-1">
        {studyTabsFor(grants).map((tab) => (
          <li key={tab.path}>
            <NavLink
              to={`${studyPath(study.id)}/${tab.path}`}
              className={({ isActive }) =>
                `block border-b-4 px-3 py-2 font-semibold no-underline ${
                  isActive ? 'border-accent text-accent-strong' : 'border-transparent text-ink hover:border-line-strong hover:text-ink'
                }`
              }
            >
              {tab.label}
            </NavLink>
          </li>
        ))}
      </ul>
    </nav>
  );
}

/** The frame of every tab of a study: its title, state and badges, and the tabs the person's roles open. */
export function StudyLayout() {
  const study = useCurrentStudy();
  const grants = useGrants();
  const { pathname } = useLocation();
  const segment = pathname.split('/')[3];
  const tab = Object.values(studyTabs).find((t) => t.path === segment);

  return (
    <>
      <title>{`${tab ? `${tab.label} · ` : ''}${study.title} · Evenhand`}</title>
      <div className="mb-6">
        {/* On paper the study's title stays; the way back and the state pills are for the screen. */}
        <p className="text-sm font-semibold text-ink-muted print:hidden" data-testid="breadcrumb">
          <NavLink to="/studies">Studies</NavLink>
        </p>
        <h1 className="mt-1 text-3xl font-semibold tracking-tight">{study.title}</h1>
        <div className="mt-3 flex flex-wrap items-center gap-2 print:hidden" data-testid="study-state">
          <StudyBadges study={study} />
          <span className="text-sm text-ink-muted">
            Assigns {unitLabels[study.unitOfAssignment].plural} to the intervention or the comparison
          </span>
        </div>
      </div>
      <StudyNavigation study={study} grants={grants} />
      <Outlet />
    </>
  );
}

function Count({ label, value }: { label: string; value: string | number }) {
  return (
    <div className="rounded-lg border border-line bg-surface px-4 py-3">
      <dt className="text-sm text-ink-muted">{label}</dt>
      <dd className="text-2xl font-semibold">{value}</dd>
    </div>
  );
}

export function StudyOverviewPage() {
  const study = useCurrentStudy();
  const grants = useGrants();
  const status = studyStatusLabels[study.status];

  return (
    <div className="grid gap-10 lg:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
      <div className="space-y-10">
        <section aria-labelledby="overview-what">
          <h2 id="overview-what" className="text-xl font-semibold">
            What is compared
          </h2>
          <dl className="mt-4 grid gap-4 sm:grid-cols-2">
            <div className="rounded-lg border border-accent/40 bg-accent-soft/50 p-4">
              <dt className="font-semibold text-accent-strong">Intervention</dt>
              <dd className="mt-1">{study.intervention}</dd>
            </div>
            <div className="rounded-lg border border-line bg-surface p-4">
              <dt className="font-semibold">Comparison condition</dt>
              <dd className="mt-1">{study.comparisonCondition}</dd>
            </div>
          </dl>
          <p className="mt-4">
            The draw assigns whole <strong>{unitLabels[study.unitOfAssignment].plural}</strong> to one arm or the other
            {study.unitOfAssignment === 'classroom' ? ', within each school' : ''}. Started on {formatDate(study.createdAt)}.
          </p>
        </section>

        <section aria-labelledby="overview-state">
          <h2 id="overview-state" className="text-xl font-semibold">
            Where it stands
          </h2>
          <div className="mt-4 space-y-3">
            <StudyStatusSteps status={study.status} />
            <p>
              <strong>{status.label}.</strong> {status.meaning}
            </p>
            <ul className="list-disc space-y-1 pl-5">
              <li>
                {study.sealedAt
                  ? `The plan was sealed on ${formatDateTime(study.sealedAt)}; version ${study.planVersion} is in force.`
                  : 'The plan is not sealed yet.'}
              </li>
              <li>{study.drawCommittedAt ? `The draw was committed on ${formatDateTime(study.drawCommittedAt)}.` : 'The draw has not been run yet.'}</li>
            </ul>
            {study.quasiExperimental && (
              <Alert tone="caution" title="Quasi-experimental">
                A classroom was moved to the other arm by hand after the random draw. Results must show baseline equivalence
                before anyone reads them as the effect of the intervention.
              </Alert>
            )}
          </div>
        </section>

        <section aria-labelledby="overview-counts">
          <h2 id="overview-counts" className="text-xl font-semibold">
            In numbers
          </h2>
          <dl className="mt-4 grid grid-cols-2 gap-3 sm:grid-cols-4">
            <Count label="Sites" value={study.counts.sites} />
            <Count label="Classrooms" value={study.counts.classrooms} />
            <Count label="Measures" value={study.counts.measures} />
            <Count label="Waves" value={study.counts.waves} />
          </dl>
        </section>
      </div>

      <section aria-labelledby="overview-next" className="self-start rounded-lg border border-line bg-surface p-6">
        <h2 id="overview-next" className="text-xl font-semibold">
          Next steps for you
        </h2>
        <div className="mt-4">
          <NextSteps study={study} steps={nextStepsFor(study, grants)} />
        </div>
      </section>
    </div>
  );
}

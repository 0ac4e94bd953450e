import type { QueryClient } from '@tanstack/react-query';
import type { RouteObject } from 'react-router-dom';
import { guardArea, homeLoader, requireUser } from '@/app/guards';
import { NotFoundRoute } from '@/app/not-found-page';
import { PublicLayout } from '@/app/public-layout';
import { RouteError } from '@/app/route-error';
import { SignedInLayout } from '@/app/signed-in-layout';
import { Loading } from '@/components/ui/spinner';
import { sessionQueryOptions } from '@/features/auth/api';
import { AcceptRolePage, ForgotPasswordPage, SetPasswordPage, SignInPage } from '@/features/auth/routes';
import { areas, studyTabs } from '@/lib/navigation';

// Only the public pages and the frames are in the first download (the sign-in page's JavaScript, measured by
// `npm run bench -w apps/web`); each signed-in page loads on first visit through its route's `lazy`.
const accounts = () => import('@/features/accounts/routes');
const audit = () => import('@/features/audit/routes');
const digests = () => import('@/features/digests/routes');
const home = () => import('@/features/home/routes');
const mySchool = () => import('@/features/my-school/routes');
const draw = () => import('@/features/draw/routes');
const sites = () => import('@/features/sites/routes');
const scoreSheets = () => import('@/features/score-sheets/routes');
const studies = () => import('@/features/studies/routes');

export function createRoutes(queryClient: QueryClient): RouteObject[] {
  return [
    {
      errorElement: (
        <PublicLayout>
          <RouteError />
        </PublicLayout>
      ),
      hydrateFallbackElement: (
        <PublicLayout>
          <Loading label="Opening Evenhand…" />
        </PublicLayout>
      ),
      children: [
        {
          Component: PublicLayout,
          children: [
            { path: 'sign-in', Component: SignInPage },
            { path: 'forgot-password', Component: ForgotPasswordPage },
            { path: 'set-password', Component: SetPasswordPage },
            // Opened from a digest's links, signed in or not.
            { path: 'email-preferences', lazy: async () => ({ Component: (await digests()).EmailPreferencesPage }) },
          ],
        },
        {
          Component: SignedInLayout,
          loader: async ({ request }) => {
            await requireUser(queryClient, request);
            return null;
          },
          children: [
            {
              // Inside the layout, so a refused or failed page keeps the header and navigation.
              errorElement: <RouteError />,
              children: [
                { index: true, loader: homeLoader(queryClient), lazy: async () => ({ Component: (await home()).NoRolePage }) },
                // The link that names someone for a school role; the layout has them sign in first.
                { path: 'invitations/accept', Component: AcceptRolePage },
                {
                  path: areas.myClasses.path,
                  lazy: async () => {
                    const { MyClassesPage, myClassesLoader } = await scoreSheets();
                    return { loader: guardArea(queryClient, areas.myClasses, myClassesLoader(queryClient)), Component: MyClassesPage };
                  },
                },
                {
                  path: areas.scoreSheet.path,
                  lazy: async () => {
                    const { ScoreSheetPage, scoreSheetLoader } = await scoreSheets();
                    return { loader: guardArea(queryClient, areas.scoreSheet, scoreSheetLoader(queryClient)), Component: ScoreSheetPage };
                  },
                },
                {
                  path: areas.mySchool.path,
                  lazy: async () => {
                    const { MySchoolPage, mySchoolLoader } = await mySchool();
                    return { loader: guardArea(queryClient, areas.mySchool, mySchoolLoader(queryClient)), Component: MySchoolPage };
                  },
                },
                {
                  path: areas.studies.path,
                  lazy: async () => {
                    const [{ StudiesPage, studiesLoader, studiesShouldRevalidate }, { ToDoPanel }] = await Promise.all([studies(), home()]);
                    return {
                      loader: guardArea(queryClient, areas.studies, studiesLoader(queryClient)),
                      shouldRevalidate: studiesShouldRevalidate,
                      element: <StudiesPage toDo={<ToDoPanel home={areas.studies.path} />} />,
                    };
                  },
                },
                {
                  // A study's tabs: each guarded by the role table in lib/navigation.ts (studyTabs).
                  path: `${areas.studies.path}/:studyId`,
                  lazy: async () => {
                    const { StudyLayout, studyLoader } = await studies();
                    return { loader: guardArea(queryClient, areas.studies, studyLoader(queryClient)), Component: StudyLayout };
                  },
                  children: [
                    {
                      // Inside the study, so a refused tab keeps the study's header and tabs.
                      errorElement: <RouteError />,
                      // The tabs that draw charts load on first visit: the chart library is over a quarter of the app's weight.
                      children: [
                        { index: true, lazy: async () => ({ loader: (await studies()).studyIndexLoader }) },
                        {
                          path: studyTabs.overview.path,
                          lazy: async () => ({ loader: guardArea(queryClient, studyTabs.overview), Component: (await studies()).StudyOverviewPage }),
                        },
                        {
                          path: studyTabs.plan.path,
                          lazy: async () => {
                            const { PlanPage, planLoader } = await import('@/features/plan/routes');
                            return { loader: guardArea(queryClient, studyTabs.plan, planLoader(queryClient)), Component: PlanPage };
                          },
                        },
                        {
                          path: studyTabs.sites.path,
                          lazy: async () => {
                            const { SitesPage, sitesLoader } = await sites();
                            return { loader: guardArea(queryClient, studyTabs.sites, sitesLoader(queryClient)), Component: SitesPage };
                          },
                        },
                        {
                          path: studyTabs.draw.path,
                          lazy: async () => {
                            const { DrawPage, drawLoader } = await draw();
                            return { loader: guardArea(queryClient, studyTabs.draw, drawLoader(queryClient)), Component: DrawPage };
                          },
                        },
                        {
                          path: studyTabs.scoreSheets.path,
                          lazy: async () => {
                            const { StudyScoreSheetsPage, studyScoreSheetsLoader } = await scoreSheets();
                            return { loader: guardArea(queryClient, studyTabs.scoreSheets, studyScoreSheetsLoader(queryClient)), Component: StudyScoreSheetsPage };
                          },
                        },
                        {
                          path: `${studyTabs.scoreSheets.path}/:sheetId`,
                          lazy: async () => {
                            const { StudySheetPage, studySheetLoader } = await scoreSheets();
                            return { loader: guardArea(queryClient, studyTabs.scoreSheets, studySheetLoader(queryClient)), Component: StudySheetPage };
                          },
                        },
                        {
                          path: studyTabs.checks.path,
                          lazy: async () => {
                            const { ChecksPage, checksLoader } = await import('@/features/checks/routes');
                            return { loader: guardArea(queryClient, studyTabs.checks, checksLoader(queryClient)), Component: ChecksPage };
                          },
                        },
                        {
                          path: studyTabs.comparisons.path,
                          lazy: async () => {
                            const { ComparisonsPage, comparisonsLoader } = await import('@/features/comparisons/routes');
                            return { loader: guardArea(queryClient, studyTabs.comparisons, comparisonsLoader(queryClient)), Component: ComparisonsPage };
                          },
                        },
                        {
                          path: `${studyTabs.comparisons.path}/runs/:runId`,
                          lazy: async () => {
                            const { RunResultsPage, runLoader } = await import('@/features/comparisons/routes');
                            return { loader: guardArea(queryClient, studyTabs.comparisons, runLoader(queryClient)), Component: RunResultsPage };
                          },
                        },
                        {
                          // The printable report reads the same results as the Comparisons tab, for the same roles.
                          path: 'report',
                          lazy: async () => {
                            const { reportLoader, StudyReportPage } = await import('@/features/report/routes');
                            return { loader: guardArea(queryClient, studyTabs.comparisons, reportLoader(queryClient)), Component: StudyReportPage };
                          },
                        },
                        {
                          path: studyTabs.digests.path,
                          lazy: async () => {
                            const { DigestsPage, digestsLoader, digestsShouldRevalidate } = await digests();
                            return { loader: guardArea(queryClient, studyTabs.digests, digestsLoader(queryClient)), shouldRevalidate: digestsShouldRevalidate, Component: DigestsPage };
                          },
                        },
                        {
                          path: studyTabs.audit.path,
                          lazy: async () => {
                            const { StudyAuditPage, studyAuditLoader, auditShouldRevalidate } = await audit();
                            return { loader: guardArea(queryClient, studyTabs.audit, studyAuditLoader(queryClient)), shouldRevalidate: auditShouldRevalidate, Component: StudyAuditPage };
                          },
                        },
                      ],
                    },
                  ],
                },
                {
                  path: areas.accounts.path,
                  lazy: async () => {
                    const [{ AccountsPage, accountsLoader, accountsShouldRevalidate }, { ToDoPanel }] = await Promise.all([accounts(), home()]);
                    return {
                      loader: guardArea(queryClient, areas.accounts, accountsLoader(queryClient)),
                      shouldRevalidate: accountsShouldRevalidate,
                      element: <AccountsPage toDo={<ToDoPanel home={areas.accounts.path} />} />,
                    };
                  },
                },
                {
                  path: areas.audit.path,
                  lazy: async () => {
                    const { AuditPage, auditLoader, auditShouldRevalidate } = await audit();
                    return { loader: guardArea(queryClient, areas.audit, auditLoader(queryClient)), shouldRevalidate: auditShouldRevalidate, Component: AuditPage };
                  },
                },
              ],
            },
          ],
        },
        {
          path: '*',
          loader: async () => {
            // Only to choose the frame; a failing session check must not hide the not-found page.
            await queryClient.ensureQueryData(sessionQueryOptions()).catch(() => null);
            return null;
          },
          Component: NotFoundRoute,
        },
      ],
    },
  ];
}

import type { QueryClient } from '@tanstack/react-query';
import type { RouteObject } from 'react-router-dom';
import { guardArea, homeLoader, requireUser } from '@/app/guards';
import { NotFoundRoute } from '@/app/not-found-page';
import { PublicLayout } from '@/app/public-layout';
import { RouteError } from '@/app/route-error';
import { SignedInLayout } from '@/app/signed-in-layout';
import { Loading } from '@/components/ui/spinner';
import { AccountsPage, accountsLoader, accountsShouldRevalidate } from '@/features/accounts/routes';
import { AuditPage, auditLoader, auditShouldRevalidate, StudyAuditPage, studyAuditLoader } from '@/features/audit/routes';
import { sessionQueryOptions } from '@/features/auth/api';
import { ForgotPasswordPage, SetPasswordPage, SignInPage } from '@/features/auth/routes';
import { DigestsPage, digestsLoader, digestsShouldRevalidate, EmailPreferencesPage } from '@/features/digests/routes';
import { NoRolePage, ToDoPanel } from '@/features/home/routes';
import { MySchoolPage, mySchoolLoader } from '@/features/my-school/routes';
import { DrawPage, drawLoader } from '@/features/draw/routes';
import { SitesPage, sitesLoader } from '@/features/sites/routes';
import {
  MyClassesPage,
  myClassesLoader,
  ScoreSheetPage,
  scoreSheetLoader,
  StudyScoreSheetsPage,
  studyScoreSheetsLoader,
  StudySheetPage,
  studySheetLoader,
} from '@/features/score-sheets/routes';
import {
  StudiesPage,
  studiesLoader,
  studiesShouldRevalidate,
  StudyLayout,
  studyIndexLoader,
  studyLoader,
  StudyOverviewPage,
} from '@/features/studies/routes';
import { areas, studyTabs } from '@/lib/navigation';

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
            { path: 'email-preferences', Component: EmailPreferencesPage },
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
                { index: true, loader: homeLoader(queryClient), Component: NoRolePage },
                { path: areas.myClasses.path, loader: guardArea(queryClient, areas.myClasses, myClassesLoader(queryClient)), Component: MyClassesPage },
                { path: areas.scoreSheet.path, loader: guardArea(queryClient, areas.scoreSheet, scoreSheetLoader(queryClient)), Component: ScoreSheetPage },
                { path: areas.mySchool.path, loader: guardArea(queryClient, areas.mySchool, mySchoolLoader(queryClient)), Component: MySchoolPage },
                {
                  path: areas.studies.path,
                  loader: guardArea(queryClient, areas.studies, studiesLoader(queryClient)),
                  shouldRevalidate: studiesShouldRevalidate,
                  element: <StudiesPage toDo={<ToDoPanel home={areas.studies.path} />} />,
                },
                {
                  // A study's tabs: each guarded by the role table in lib/navigation.ts (studyTabs).
                  path: `${areas.studies.path}/:studyId`,
                  loader: guardArea(queryClient, areas.studies, studyLoader(queryClient)),
                  Component: StudyLayout,
                  children: [
                    {
                      // Inside the study, so a refused tab keeps the study's header and tabs.
                      errorElement: <RouteError />,
                      // The tabs that draw charts load on first visit: the chart library is over a quarter of the app's weight.
                      children: [
                        { index: true, loader: studyIndexLoader },
                        { path: studyTabs.overview.path, loader: guardArea(queryClient, studyTabs.overview), Component: StudyOverviewPage },
                        {
                          path: studyTabs.plan.path,
                          lazy: async () => {
                            const { PlanPage, planLoader } = await import('@/features/plan/routes');
                            return { loader: guardArea(queryClient, studyTabs.plan, planLoader(queryClient)), Component: PlanPage };
                          },
                        },
                        { path: studyTabs.sites.path, loader: guardArea(queryClient, studyTabs.sites, sitesLoader(queryClient)), Component: SitesPage },
                        { path: studyTabs.draw.path, loader: guardArea(queryClient, studyTabs.draw, drawLoader(queryClient)), Component: DrawPage },
                        {
                          path: studyTabs.scoreSheets.path,
                          loader: guardArea(queryClient, studyTabs.scoreSheets, studyScoreSheetsLoader(queryClient)),
                          Component: StudyScoreSheetsPage,
                        },
                        {
                          path: `${studyTabs.scoreSheets.path}/:sheetId`,
                          loader: guardArea(queryClient, studyTabs.scoreSheets, studySheetLoader(queryClient)),
                          Component: StudySheetPage,
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
                          loader: guardArea(queryClient, studyTabs.digests, digestsLoader(queryClient)),
                          shouldRevalidate: digestsShouldRevalidate,
                          Component: DigestsPage,
                        },
                        {
                          path: studyTabs.audit.path,
                          loader: guardArea(queryClient, studyTabs.audit, studyAuditLoader(queryClient)),
                          shouldRevalidate: auditShouldRevalidate,
                          Component: StudyAuditPage,
                        },
                      ],
                    },
                  ],
                },
                {
                  path: areas.accounts.path,
                  loader: guardArea(queryClient, areas.accounts, accountsLoader(queryClient)),
                  shouldRevalidate: accountsShouldRevalidate,
                  element: <AccountsPage toDo={<ToDoPanel home={areas.accounts.path} />} />,
                },
                {
                  path: areas.audit.path,
                  loader: guardArea(queryClient, areas.audit, auditLoader(queryClient)),
                  shouldRevalidate: auditShouldRevalidate,
                  Component: AuditPage,
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

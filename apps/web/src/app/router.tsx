import type { QueryClient } from '@tanstack/react-query';
import type { RouteObject } from 'react-router-dom';
import { guardArea, homeLoader, requireUser } from '@/app/guards';
import { NotFoundRoute } from '@/app/not-found-page';
import { PublicLayout } from '@/app/public-layout';
import { RouteError } from '@/app/route-error';
import { SignedInLayout } from '@/app/signed-in-layout';
import { Loading } from '@/components/ui/spinner';
import { AccountsPage, accountsLoader, accountsShouldRevalidate } from '@/features/accounts/routes';
import { AuditPage, auditLoader, auditShouldRevalidate } from '@/features/audit/routes';
import { sessionQueryOptions } from '@/features/auth/api';
import { ForgotPasswordPage, SetPasswordPage, SignInPage } from '@/features/auth/routes';
import { MyClassesPage, MySchoolPage, NoRolePage, StudiesPage } from '@/features/home/routes';
import { areas } from '@/lib/navigation';

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
                { path: areas.myClasses.path, loader: guardArea(queryClient, areas.myClasses), Component: MyClassesPage },
                { path: areas.mySchool.path, loader: guardArea(queryClient, areas.mySchool), Component: MySchoolPage },
                { path: areas.studies.path, loader: guardArea(queryClient, areas.studies), Component: StudiesPage },
                {
                  path: areas.accounts.path,
                  loader: guardArea(queryClient, areas.accounts, accountsLoader(queryClient)),
                  shouldRevalidate: accountsShouldRevalidate,
                  Component: AccountsPage,
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

import { EmptyState } from '@/components/ui/empty-state';
import { PageHeader } from '@/components/ui/page-header';

export function MySchoolPage() {
  return (
    <>
      <PageHeader title="My school" description="How your school's part of the district's studies is going." />
      <EmptyState title="Your school is not in a study yet">
        <p>
          When your school takes part in a study, this page shows how many of its classrooms take part and how complete their
          scores are. Once the research lead locks a result, it appears here in plain language, and you also receive it as an
          e-mailed digest.
        </p>
        <p>There is nothing for you to do now. If you expected to see a study here, ask your district's study coordinator.</p>
      </EmptyState>
    </>
  );
}

/** Home for an account whose roles were all taken away: it can sign in but opens nothing. */
export function NoRolePage() {
  return (
    <>
      <PageHeader title="Welcome to Evenhand" />
      <EmptyState title="Your account has no role yet">
        <p>
          Roles decide what you can see and do here — for example teaching a class in a study, or following your school's
          results. Ask your district admin to give you the role your work needs, then sign in again.
        </p>
      </EmptyState>
    </>
  );
}

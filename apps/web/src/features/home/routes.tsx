import { EmptyState } from '@/components/ui/empty-state';
import { PageHeader } from '@/components/ui/page-header';

// The "Waiting for you" panel, shown on each role's home page.
export { ToDoPanel } from './components/to-do-panel';

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

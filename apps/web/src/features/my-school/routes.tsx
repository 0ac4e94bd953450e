import { digestFrequencyLabels } from '@evenhand/entities';
import { useSuspenseQuery, type QueryClient } from '@tanstack/react-query';
import { Link } from 'react-router-dom';
import { EmptyState } from '@/components/ui/empty-state';
import { PageHeader } from '@/components/ui/page-header';
import { mySchoolQueryOptions } from '@/features/my-school/api';
import { SchoolFacts } from '@/features/my-school/components/school-facts';

export function mySchoolLoader(queryClient: QueryClient) {
  return async () => {
    await queryClient.ensureQueryData(mySchoolQueryOptions());
    return null;
  };
}

/** The principal's home: their own school in each study, live, as their digests tell it. */
export function MySchoolPage() {
  const { data } = useSuspenseQuery(mySchoolQueryOptions());
  const preferences = `/email-preferences?token=${encodeURIComponent(data.digests.preferencesToken)}`;
  return (
    <>
      <PageHeader title="My school" description="How your school’s part of the district’s studies is going, and what the locked results say." />
      {data.items.length === 0 ? (
        <EmptyState title="Your school is not in a study yet">
          <p>
            When your school takes part in a study, this page shows how many of its classrooms take part and how complete their scores are.
            Once the research lead locks a result, it appears here in plain language, and you also receive it as an e-mailed digest.
          </p>
          <p>There is nothing for you to do now. If you expected to see a study here, ask your district’s study coordinator.</p>
        </EmptyState>
      ) : (
        <div className="space-y-16">
          {data.items.map((facts) => (
            <SchoolFacts key={`${facts.study.id}|${facts.site.id}`} facts={facts} />
          ))}
        </div>
      )}
      <p className="mt-12 max-w-prose border-t border-line pt-6 text-ink-muted">
        E-mailed digests: {digestFrequencyLabels[data.digests.frequency].toLowerCase()}. <Link to={preferences}>Change how often you get them</Link>
      </p>
    </>
  );
}

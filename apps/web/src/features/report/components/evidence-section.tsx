import { useSuspenseQuery } from '@tanstack/react-query';
import { EvidenceVerdictView } from '@/components/evidence/verdict';
import { studyEvidenceQueryOptions } from '@/lib/queries';

/** The report's verdict per pre-specified comparison, judged against the boundary its plan registers, with every reason. */
export function EvidenceSection({ studyId }: { studyId: string }) {
  const { data } = useSuspenseQuery(studyEvidenceQueryOptions(studyId));
  if (data.comparisons.length === 0) return <p className="text-ink-muted">The plan has no pre-specified comparisons to rate yet.</p>;
  return (
    <div className="space-y-8">
      <p className="max-w-prose">
        How each pre-specified comparison would fare under the published evidence standards and the evidence tiers of federal education law,
        from the numbers Evenhand holds, judged against the attrition boundary the plan registers (each verdict says which, and why). A locked
        result keeps the verdict it had when it was locked. This is a preview, not a review: the evidence reviewers decide, and they also judge
        what Evenhand cannot see, listed under each verdict.
      </p>
      {data.comparisons.map((c) => (
        <EvidenceVerdictView
          key={c.comparisonId}
          studyId={studyId}
          runId={c.runId}
          verdict={c.verdict}
          boundary={c.boundary.explanation}
          headingId={`evidence-${c.comparisonId}`}
          title={`${c.label}${c.locked ? '' : ' (not locked yet)'}`}
        />
      ))}
    </div>
  );
}

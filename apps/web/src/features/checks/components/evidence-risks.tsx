import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { SeeOnLink } from '@/components/evidence/verdict';
import { attritionBoundaryLabels } from '@/lib/plan-labels';
import { studyEvidenceQueryOptions } from '@/lib/queries';

type Boundary = 'cautious' | 'optimistic';

/**
 * While data arrive: what currently puts each pre-specified comparison's rating at risk, and the numbers that would
 * change it, judged against the boundary the plan registers unless the reader picks the other one to see the difference.
 */
export function EvidenceRisks({ studyId }: { studyId: string }) {
  const [asked, setAsked] = useState<Boundary | undefined>(undefined);
  const { data, isPending, isError } = useQuery(studyEvidenceQueryOptions(studyId, asked));
  const plan = useQuery({ ...studyEvidenceQueryOptions(studyId), enabled: asked !== undefined }).data ?? data;
  const planBoundary = plan?.plan.boundary;
  const boundary = asked ?? planBoundary;
  return (
    <section aria-labelledby="evidence-risks" className="space-y-4" data-testid="evidence-risks">
      <h2 id="evidence-risks" className="text-2xl font-semibold tracking-tight">
        Will it count as evidence?
      </h2>
      <fieldset className="max-w-prose space-y-1">
        <legend className="font-semibold">Attrition boundary to judge by</legend>
        {(['cautious', 'optimistic'] as const).map((value) => (
          <label key={value} className="flex items-start gap-2">
            <input
              type="radio"
              name="evidence-boundary"
              value={value}
              checked={boundary === value}
              onChange={() => setAsked(value === planBoundary ? undefined : value)}
              className="mt-1 size-4 accent-[var(--color-accent)]"
            />
            <span>
              {attritionBoundaryLabels[value]}
              {value === planBoundary ? ' (the plan’s)' : ''}
            </span>
          </label>
        ))}
      </fieldset>
      {isPending && <p className="text-ink-muted">Working out the verdict…</p>}
      {isError && <p className="text-ink-muted">The verdict could not be worked out just now.</p>}
      {data?.comparisons.map((c) => (
        <div key={c.comparisonId} className="space-y-2 break-words">
          <h3 className="text-xl font-semibold">{c.label}</h3>
          <p className="max-w-prose">{c.verdict.wording}</p>
          <p className="max-w-prose text-ink-muted" data-testid="evidence-boundary">
            {c.boundary.explanation}
          </p>
          {c.locked ? (
            <p className="text-ink-muted">Its result is locked: nothing arriving now changes the verdict.</p>
          ) : c.risks.length === 0 ? (
            <p className="text-ink-muted">Nothing in the data so far puts the rating at risk.</p>
          ) : (
            <ul className="max-w-prose list-disc space-y-1 pl-5" aria-label={`What puts ${c.label} at risk`}>
              {c.risks.map((r) => (
                <li key={r.text}>
                  {r.text} <SeeOnLink studyId={studyId} runId={c.runId} seeOn={r.seeOn} />
                </li>
              ))}
            </ul>
          )}
        </div>
      ))}
    </section>
  );
}

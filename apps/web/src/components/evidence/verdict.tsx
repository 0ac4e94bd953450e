import type { EvidenceReasonAnswer, VerdictAnswer } from '@evenhand/entities';
import { Link } from 'react-router-dom';
import { Badge } from '@/components/ui/badge';
import { studyPath } from '@/lib/navigation';
import { runPath } from '@/lib/results';

type SeeOn = EvidenceReasonAnswer['seeOn'];

const ratingLabels: Record<VerdictAnswer['rating'], string> = {
  'without-reservations': 'Meets the standards without reservations',
  'with-reservations': 'Meets the standards with reservations',
  'does-not-meet': 'Does not meet the standards',
  'cannot-tell': 'Cannot be rated yet',
};
const tierLabels: Record<VerdictAnswer['tier'], string> = { strong: 'Strong evidence', moderate: 'Moderate evidence', promising: 'Promising evidence', none: 'No evidence tier' };
const statusWords = (passed: boolean | null) => (passed === null ? 'Not known yet' : passed ? 'Met' : 'Not met');
const seeOnWords: Record<SeeOn, string> = { checks: 'Checks', result: 'the result', plan: 'the plan', draw: 'the draw' };

/** Where a reason's numbers are shown: the Checks, the result the verdict read, the plan or the draw. */
export function seeOnPath(studyId: string, runId: string | null, seeOn: SeeOn): string {
  if (seeOn === 'result') return runId ? runPath(studyId, runId) : studyPath(studyId, 'comparisons');
  return studyPath(studyId, seeOn);
}

export function SeeOnLink({ studyId, runId, seeOn }: { studyId: string; runId: string | null; seeOn: SeeOn }) {
  return (
    <Link to={seeOnPath(studyId, runId, seeOn)} className="print:hidden">
      See it on {seeOnWords[seeOn]}
    </Link>
  );
}

/**
 * A verdict with every reason (rule, numbers, what it does, source, where to see it) and what the reviewers must still
 * check; `boundary` says which attrition boundary it was judged against and why.
 */
export function EvidenceVerdictView({ studyId, runId, verdict, boundary, headingId, title }: { studyId: string; runId: string | null; verdict: VerdictAnswer; boundary: string; headingId: string; title: string }) {
  return (
    <section aria-labelledby={headingId} className="space-y-4" data-testid="evidence-verdict">
      <h4 id={headingId} className="text-xl font-semibold">
        {title}
      </h4>
      <div className="flex flex-wrap gap-2">
        <Badge tone={verdict.rating === 'does-not-meet' ? 'caution' : verdict.rating === 'cannot-tell' ? 'muted' : 'accent'}>{ratingLabels[verdict.rating]}</Badge>
        <Badge tone={verdict.tier === 'none' ? 'muted' : 'accent'}>{verdict.settled ? tierLabels[verdict.tier] : 'Tier not settled yet'}</Badge>
      </div>
      <p className="max-w-prose font-semibold">{verdict.wording}</p>
      <p className="max-w-prose text-ink-muted" data-testid="evidence-boundary">
        {boundary}
      </p>
      <ol className="space-y-3" aria-label="Reasons, rule by rule">
        {verdict.reasons.map((r) => (
          <li key={r.id} className="rounded-md border border-line px-4 py-3 break-words" data-reason={r.id}>
            <p>
              <strong>{statusWords(r.passed)}:</strong> {r.rule}.
            </p>
            <p className="text-ink-muted">{r.numbers}.</p>
            <p>{r.consequence}</p>
            <p className="text-sm text-ink-muted">
              Source: {r.citation}. <SeeOnLink studyId={studyId} runId={runId} seeOn={r.seeOn} />
            </p>
          </li>
        ))}
      </ol>
      <details className="max-w-prose">
        <summary className="cursor-pointer font-semibold">What the evidence reviewers must still check</summary>
        <ul className="mt-2 list-disc space-y-1 pl-5">
          {verdict.reviewerChecks.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
      </details>
    </section>
  );
}

import { PREVIEW_CAUTION, planPreview, type PlannedDesign } from '@evenhand/stats';

const tierWords = { strong: 'strong evidence', moderate: 'moderate evidence', promising: 'promising evidence', none: 'no evidence tier' } as const;

/**
 * Before sealing: what the design can reach at best under the evidence standards and the law's tiers, recomputed as the
 * plan changes, with what that best case assumes and what limits it.
 */
export function EvidencePreview({ design }: { design: PlannedDesign }) {
  // A handful of sums per keystroke: no need to memoise.
  const preview = planPreview(design);
  const limits = preview.best.reasons.filter((r) => r.passed === false);
  return (
    <section aria-labelledby="evidence-preview" className="space-y-3 rounded-md border border-line p-4 break-words" data-testid="evidence-preview">
      <h3 id="evidence-preview" className="text-lg font-semibold">
        Will it count as evidence?
      </h3>
      <p aria-live="polite">
        At best, this design <strong>{preview.best.rating === 'does-not-meet' ? 'would not meet the evidence standards' : `would meet the evidence standards ${preview.best.rating === 'without-reservations' ? 'without' : 'with'} reservations`}</strong>{' '}
        and reach <strong>{tierWords[preview.best.tier]}</strong>.
      </p>
      {limits.length > 0 && (
        <ul className="list-disc space-y-1 pl-5" aria-label="What limits it">
          {limits.map((r) => (
            <li key={r.id}>{r.consequence}</li>
          ))}
        </ul>
      )}
      <details>
        <summary className="cursor-pointer">What this assumes</summary>
        <ul className="mt-2 list-disc space-y-1 pl-5 text-sm text-ink-muted">
          {preview.conditions.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
      </details>
      <p className="text-sm text-ink-muted">{PREVIEW_CAUTION}</p>
    </section>
  );
}

import type { AttritionBoundaryCheck, AttritionCheck } from '@evenhand/entities';
import { Badge } from '@/components/ui/badge';
import { FigureTable } from '@/components/ui/figure-table';
import { formatCount, formatNumber, formatPercent } from '@/lib/format';

export interface ArmCounts {
  intervention: { randomised: number; analysed: number };
  comparison: { randomised: number; analysed: number };
  /** Those not analysed, one line per reason ("3 students: outcome sheet returned to the teacher"). */
  lost: string[];
}

/** Percentage points, abbreviated as the standards do and spelled out for screen readers. */
function Points({ value }: { value: number }) {
  return (
    <>
      {formatNumber(value, 1)}{' '}
      <abbr title="percentage points" className="no-underline">
        pp
      </abbr>
    </>
  );
}

const boundaryNames = { cautious: 'Cautious boundary', optimistic: 'Optimistic boundary' } as const;

function howFound(b: AttritionBoundaryCheck, overall: number): string {
  if (b.basis === 'always-high') {
    return `at ${formatPercent(overall)} overall attrition, every differential counts as high attrition.`;
  }
  if (b.interpolated && b.bracketingRows) {
    const [low, high] = b.bracketingRows;
    return `interpolated between the handbook’s listed rows for ${low}% and ${high}% overall attrition.`;
  }
  return `the handbook’s listed row for ${formatPercent(overall, 0)} overall attrition.`;
}

/**
 * Overall and differential attrition of one unit (students or classrooms), judged against both
 * published boundaries, with where each boundary value came from.
 */
export function AttritionPanel({ title, unit, attrition, counts }: { title: string; unit: [string, string]; attrition: AttritionCheck | null; counts: ArmCounts | null }) {
  if (!attrition) {
    return (
      <section className="rounded-lg border border-line bg-surface p-5">
        <h4 className="text-lg font-semibold">{title}</h4>
        <p className="mt-2 text-ink-muted">Attrition can be worked out once both arms have {unit[1]} assigned and an outcome wave.</p>
      </section>
    );
  }
  const interpolated = [attrition.cautious, attrition.optimistic].filter((b) => b.interpolated && b.bracketingRows);
  const randomised = counts ? counts.intervention.randomised + counts.comparison.randomised : null;
  const analysed = counts ? counts.intervention.analysed + counts.comparison.analysed : null;

  return (
    <section className="rounded-lg border border-line bg-surface p-5">
      <h4 className="text-lg font-semibold">{title}</h4>
      <dl className="mt-3 grid grid-cols-2 gap-x-6 gap-y-3 sm:grid-cols-4">
        <div>
          <dt className="text-sm text-ink-muted">Overall attrition</dt>
          <dd className="text-2xl font-semibold tabular-nums">{formatPercent(attrition.overall)}</dd>
        </div>
        <div>
          <dt className="text-sm text-ink-muted">Intervention arm</dt>
          <dd className="text-xl tabular-nums">{formatPercent(attrition.attrition1)}</dd>
        </div>
        <div>
          <dt className="text-sm text-ink-muted">Comparison arm</dt>
          <dd className="text-xl tabular-nums">{formatPercent(attrition.attrition2)}</dd>
        </div>
        <div>
          <dt className="text-sm text-ink-muted">Differential</dt>
          <dd className="text-xl tabular-nums">
            <Points value={attrition.differential} />
          </dd>
        </div>
      </dl>
      {randomised !== null && analysed !== null && (
        <p className="mt-3 text-sm text-ink-muted">
          Of {formatCount(randomised)} {unit[1]} randomised, {formatCount(analysed)} were analysed (intervention{' '}
          {formatCount(counts!.intervention.analysed)} of {formatCount(counts!.intervention.randomised)}, comparison{' '}
          {formatCount(counts!.comparison.analysed)} of {formatCount(counts!.comparison.randomised)}).
        </p>
      )}
      {counts && counts.lost.length > 0 && (
        <ul aria-label={`${title} not analysed, by reason`} className="mt-2 list-disc pl-5 text-sm text-ink-muted">
          {counts.lost.map((l) => (
            <li key={l}>{l}</li>
          ))}
        </ul>
      )}

      <FigureTable
        className="mt-4"
        caption={`${title}: attrition against the published boundaries`}
        hideCaption
        columns={[
          { key: 'boundary', header: 'Boundary' },
          { key: 'max', header: 'Low attrition up to', numeric: true },
          { key: 'observed', header: 'This study', numeric: true },
          { key: 'rating', header: 'Rating' },
        ]}
        rows={[attrition.cautious, attrition.optimistic].map((b) => ({
          id: b.boundary,
          boundary: boundaryNames[b.boundary],
          max: b.maxDifferential === null ? 'always high' : <Points value={b.maxDifferential} />,
          observed: <Points value={attrition.differential} />,
          rating: <Badge tone={b.band === 'low' ? 'accent' : 'caution'}>{b.band === 'low' ? 'Low attrition' : 'High attrition'}</Badge>,
        }))}
      />
      <ul className="mt-3 space-y-1 text-sm text-ink-muted">
        {/* Interpolated boundaries are explained once, in the note below. */}
        {[attrition.cautious, attrition.optimistic].filter((b) => !b.interpolated).map((b) => (
          <li key={b.boundary}>
            {boundaryNames[b.boundary]}: {howFound(b, attrition.overall)}
          </li>
        ))}
      </ul>

      {interpolated.length > 0 && (
        <p className="mt-3 rounded-md border-l-4 border-caution bg-caution-soft px-3 py-2 text-sm" data-testid="interpolation-note">
          <strong>Interpolated boundary.</strong> Evenhand stores the handbook’s rows for {interpolated[0].bracketingRows![0]}% and{' '}
          {interpolated[0].bracketingRows![1]}% overall attrition, not {formatPercent(attrition.overall)}; the boundary here is the straight
          line between them. Check the handbook’s row before reporting a rating.
        </p>
      )}
    </section>
  );
}

import type { MeasureChecks } from '@evenhand/entities';
import { FigureTable } from '@/components/ui/figure-table';
import { formatCount } from '@/lib/format';

const columns = [
  { key: 'wave', header: 'Wave' },
  { key: 'sheets', header: 'Score sheets', numeric: true },
  { key: 'accepted', header: 'Accepted', numeric: true },
  { key: 'waiting', header: 'Waiting for review', numeric: true },
  { key: 'returned', header: 'Returned to the teacher', numeric: true },
  { key: 'missing', header: 'Not started', numeric: true },
  { key: 'scores', header: 'Scores entered', numeric: true },
  { key: 'left', header: 'Students who left', numeric: true },
  { key: 'outOfRange', header: 'Outside the score range', numeric: true },
] as const;

/** Completeness and range problems of one measure's score sheets, wave by wave. */
export function DataQualityTable({ measure }: { measure: MeasureChecks }) {
  const [low, high] = measure.range;
  const flagged = measure.quality.some((q) => q.outOfRange > 0);
  return (
    <div className="space-y-2">
      <FigureTable
        caption={`Score sheets and scores by wave (scores run from ${low} to ${high})`}
        columns={columns}
        rows={measure.quality.map((q) => ({
          id: q.waveId,
          wave: q.waveName,
          sheets: formatCount(q.sheets),
          accepted: formatCount(q.accepted),
          waiting: formatCount(q.waiting),
          returned: formatCount(q.returned),
          missing: formatCount(q.missing),
          scores: formatCount(q.scores),
          left: formatCount(q.left),
          outOfRange: q.outOfRange > 0 ? <span className="font-semibold text-danger">{formatCount(q.outOfRange)}</span> : '0',
        }))}
      />
      <p className="text-sm text-ink-muted">
        {flagged
          ? 'Some scores lie outside the measure’s range: ask the teachers concerned to correct their score sheets before running confirmatory comparisons.'
          : 'No score lies outside the measure’s range.'}{' '}
        Monitoring runs read submitted and accepted sheets; confirmatory runs read accepted sheets only.
      </p>
    </div>
  );
}

import type { ScoreSheetDetail } from '@evenhand/entities';
import { EmptyState } from '@/components/ui/empty-state';

/** A sheet's rows to read: for a sheet that cannot change now, and for the coordinator's review. */
export function SheetRowsTable({ sheet }: { sheet: ScoreSheetDetail }) {
  if (sheet.mode === 'summary' && sheet.summary) {
    return (
      <section aria-labelledby="summary-read-heading" className="rounded-lg border border-line bg-surface p-6">
        <h2 id="summary-read-heading" className="text-xl font-semibold">
          Class summary
        </h2>
        <dl className="mt-4 grid max-w-xl grid-cols-3 gap-4">
          <div>
            <dt className="text-sm text-ink-muted">Students tested (n)</dt>
            <dd className="text-2xl font-semibold tabular-nums">{sheet.summary.n}</dd>
          </div>
          <div>
            <dt className="text-sm text-ink-muted">Mean score</dt>
            <dd className="text-2xl font-semibold tabular-nums">{sheet.summary.mean}</dd>
          </div>
          <div>
            <dt className="text-sm text-ink-muted">Standard deviation</dt>
            <dd className="text-2xl font-semibold tabular-nums">{sheet.summary.sd}</dd>
          </div>
        </dl>
      </section>
    );
  }
  if (!sheet.rows.length) {
    return <EmptyState title="No scores on this sheet yet" />;
  }
  return (
    <section aria-labelledby="rows-read-heading" className="space-y-3">
      <h2 id="rows-read-heading" className="text-xl font-semibold">
        Scores by student code
      </h2>
      <div role="region" aria-labelledby="rows-read-heading" tabIndex={0} className="relative max-h-[36rem] overflow-auto rounded-lg border border-line bg-surface">
        <table className="w-full border-collapse text-left">
          <caption className="sr-only">
            Scores for {sheet.classroomName}, {sheet.waveName}, {sheet.measureName}
          </caption>
          <thead className="sticky top-0 bg-sunken text-sm">
            <tr>
              <th scope="col" className="w-14 px-3 py-2">Row</th>
              <th scope="col" className="px-3 py-2">Student code</th>
              <th scope="col" className="px-3 py-2">
                {sheet.scale === 'yes-no' ? 'Answer' : 'Score'}{' '}
                <span className="font-normal text-ink-muted">{sheet.scale === 'yes-no' ? '(yes or no)' : `(${sheet.minScore}–${sheet.maxScore})`}</span>
              </th>
              <th scope="col" className="px-3 py-2">Left the study</th>
              <th scope="col" className="px-3 py-2">Note</th>
            </tr>
          </thead>
          <tbody>
            {sheet.rows.map((r, i) => (
              <tr key={r.studentCode} className="border-t border-line">
                <td className="px-3 py-1.5 text-ink-muted tabular-nums">{i + 1}</td>
                <th scope="row" className="px-3 py-1.5 font-normal">
                  {r.studentCode}
                </th>
                <td className="px-3 py-1.5 tabular-nums">{r.score === null ? '—' : sheet.scale === 'yes-no' ? (r.score === 1 ? 'Yes' : 'No') : r.score}</td>
                <td className="px-3 py-1.5">{r.left ? 'Yes' : 'No'}</td>
                <td className="px-3 py-1.5">{r.note}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}

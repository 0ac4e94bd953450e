import type { Arm, SiteFacts, SiteResult } from '@evenhand/entities';
import { useId } from 'react';
import { Badge } from '@/components/ui/badge';
import { FigureTable } from '@/components/ui/figure-table';
import { ReportedCountText } from '@/features/my-school/components/reported-count';
import { formatNumber, formatPercent, formatPStatement, formatSigned } from '@/lib/format';

const groupLabel = (arm: Arm | null) => (arm === 'intervention' ? 'Intervention classrooms' : arm === 'comparison' ? 'Comparison classrooms' : 'Not assigned yet');

const waveStatus = { upcoming: 'Not open yet', open: 'Open now', closed: 'Closed' } as const;

const day = new Intl.DateTimeFormat('en-US', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });
/** A calendar date ("2026-05-22") in words, without a time-zone shift. */
const formatDay = (isoDate: string) => day.format(new Date(`${isoDate}T00:00:00Z`));

function KeyFigure({ label, value, detail }: { label: string; value: string; detail?: string }) {
  return (
    <div className="rounded-lg border border-line bg-surface px-4 py-3">
      <dt className="text-sm text-ink-muted">{label}</dt>
      <dd className="text-2xl font-semibold tabular-nums">{value}</dd>
      {detail && <dd className="text-sm text-ink-muted">{detail}</dd>}
    </div>
  );
}

function ResultPanel({ result, siteName }: { result: SiteResult; siteName: string }) {
  const headingId = useId();
  const d = result.district;
  return (
    <article aria-labelledby={headingId} className="space-y-4 rounded-lg border border-line bg-paper p-5">
      <div className="flex flex-wrap items-center gap-2">
        <h4 id={headingId} className="text-lg font-semibold">
          {result.measureName} at {result.waveName}
        </h4>
        <Badge tone={d.met ? 'accent' : 'muted'}>{d.met ? 'Met the pre-registered test' : 'Did not meet the pre-registered test'}</Badge>
        {!result.isPrimary && <Badge tone="muted">Secondary measure</Badge>}
      </div>
      <dl className="grid gap-3 sm:grid-cols-3" aria-label="All schools in the study">
        <KeyFigure label="Effect size (Hedges’ g)" value={formatNumber(d.g, 2)} detail={`95% interval ${formatNumber(d.gCi[0], 2)} to ${formatNumber(d.gCi[1], 2)}`} />
        <KeyFigure label="Improvement index" value={formatSigned(d.improvementIndex, 0)} detail="percentile points" />
        <KeyFigure label="Pre-registered test" value={d.met ? 'Met' : 'Not met'} detail={formatPStatement(d.p)} />
      </dl>
      <div className="max-w-prose space-y-2">
        {result.sentences.map((s) => (
          <p key={s}>{s}</p>
        ))}
      </div>
      {result.site ? (
        <div className="max-w-2xl space-y-2">
          <FigureTable
            caption={`${siteName} on its own`}
            columns={[
              { key: 'group', header: 'Group' },
              { key: 'students', header: 'Students analysed', numeric: true },
              { key: 'mean', header: 'Average score', numeric: true },
            ]}
            rows={result.site.arms.map((a) => ({
              id: a.arm,
              group: groupLabel(a.arm),
              students: <ReportedCountText count={a.students} />,
              mean: a.mean === null ? <span className="text-ink-muted italic">not shown</span> : formatNumber(a.mean, 1),
            }))}
            footer={{ group: 'All', students: <ReportedCountText count={result.site.totalStudents} />, mean: '' }}
          />
          {result.site.note && <p className="max-w-prose text-sm text-ink-muted">{result.site.note}</p>}
        </div>
      ) : (
        <p className="text-sm text-ink-muted">There are no figures for {siteName} alone in this result: too few of its students were analysed in one of the groups.</p>
      )}
    </article>
  );
}

/** One school in one study: the same facts, and the same suppression, as the principal's digest. */
export function SchoolFacts({ facts }: { facts: SiteFacts }) {
  const headingId = useId();
  const p = facts.participation;
  return (
    <section aria-labelledby={headingId} className="space-y-8">
      <div>
        <h2 id={headingId} className="text-2xl font-semibold tracking-tight">
          {facts.site.name}
        </h2>
        <p className="text-ink-muted">In the study “{facts.study.title}”</p>
      </div>

      {facts.results.length > 0 && (
        <div className="space-y-4">
          <h3 className="text-xl font-semibold">{facts.results.length === 1 ? 'The locked result' : 'The locked results'}</h3>
          {facts.results.map((r) => (
            <ResultPanel key={r.runId} result={r} siteName={facts.site.name} />
          ))}
        </div>
      )}

      <div className="max-w-2xl space-y-3">
        <h3 className="text-xl font-semibold">Taking part</h3>
        {p.classrooms === 0 ? (
          <p>{facts.site.name} has no classrooms in this study yet.</p>
        ) : (
          <>
            <FigureTable
              caption="Classrooms and students with scores, by group"
              hideCaption
              columns={[
                { key: 'group', header: 'Group' },
                { key: 'classrooms', header: 'Classrooms', numeric: true },
                { key: 'students', header: 'Students with scores', numeric: true },
              ]}
              rows={p.arms.map((a) => ({ id: a.arm ?? 'unassigned', group: groupLabel(a.arm), classrooms: a.classrooms, students: <ReportedCountText count={a.students} /> }))}
              footer={{ group: 'All', classrooms: p.classrooms, students: <ReportedCountText count={p.students} /> }}
            />
            {p.note && <p className="max-w-prose text-sm text-ink-muted">{p.note}</p>}
          </>
        )}
      </div>

      <div className="max-w-4xl space-y-3">
        <h3 className="text-xl font-semibold">Scores received</h3>
        {facts.waves.length === 0 ? (
          <p>No data-collection windows are set yet.</p>
        ) : (
          <FigureTable
            caption="Score sheets accepted per wave"
            hideCaption
            columns={[
              { key: 'wave', header: 'Wave' },
              { key: 'window', header: 'Window' },
              { key: 'accepted', header: 'Accepted', numeric: true },
              { key: 'review', header: 'Awaiting review', numeric: true },
              { key: 'waiting', header: 'Not in yet', numeric: true },
            ]}
            rows={facts.waves.map((w) => ({
              id: w.id,
              wave: (
                <span>
                  {w.name} <span className="font-normal text-ink-muted">({waveStatus[w.status].toLowerCase()})</span>
                </span>
              ),
              window: `${formatDay(w.opensOn)} – ${formatDay(w.closesOn)}`,
              accepted: w.sheets ? `${w.accepted} of ${w.sheets} (${formatPercent(w.percentAccepted, 0)})` : '—',
              review: w.submitted,
              waiting: w.waiting,
            }))}
          />
        )}
      </div>

      <div className="space-y-3">
        <h3 className="text-xl font-semibold">Late</h3>
        {facts.late.length === 0 ? (
          <p>Nothing is late.</p>
        ) : (
          <>
            <p>These score sheets are still missing after their window closed:</p>
            <ul className="list-disc space-y-1 pl-6">
              {facts.late.map((l) => (
                <li key={`${l.classroomName}|${l.waveName}|${l.measureName}`}>
                  <strong>{l.classroomName}</strong>: {l.measureName}, {l.waveName} — {l.returned ? 'returned for corrections' : 'not entered'} (closed{' '}
                  {formatDay(l.closedOn)})
                </li>
              ))}
            </ul>
          </>
        )}
      </div>

      <aside aria-label="Please keep in mind" className="rounded-lg border-l-4 border-accent bg-accent-soft px-5 py-4">
        <h3 className="font-semibold">Please keep in mind</h3>
        <ul className="mt-2 list-disc space-y-1 pl-5">
          {facts.cautions.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
      </aside>
    </section>
  );
}

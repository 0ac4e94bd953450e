import { SUPPRESSED_WORDS, type Arm, type SiteFacts, type SiteResult } from '@evenhand/entities';
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

/**
 * A yes/no result for all schools: each group's share answering yes with its yes count of the students, the
 * difference in percentage points and the Cox index; a share or count the server withheld reads "not shown".
 */
function YesNoFigures({ result, yesNo }: { result: SiteResult; yesNo: NonNullable<SiteResult['yesNo']> }) {
  const d = result.district;
  const points = (x: number | null) => (x === null ? '…' : formatNumber(x * 100, 1));
  return (
    <dl className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4" aria-label="All schools in the study" data-testid="yes-no-district">
      {yesNo.arms.map((a) => (
        <KeyFigure
          key={a.arm}
          label={`Answered yes, ${groupLabel(a.arm).toLowerCase()}`}
          value={a.proportion === null ? 'Not shown' : `${formatNumber(a.proportion * 100, 0)} %`}
          detail={a.yes.value === null || a.no.value === null ? `${SUPPRESSED_WORDS} in a group` : `${a.yes.value} of ${a.yes.value + a.no.value} students`}
        />
      ))}
      <KeyFigure
        label="Difference"
        value={d.estimate === null ? 'Not shown' : `${formatSigned(d.estimate * 100, 1)} points`}
        detail={d.ci ? `${Math.round(d.confidence * 100)}% interval ${points(d.ci[0])} to ${points(d.ci[1])}` : undefined}
      />
      <KeyFigure
        label="Pre-registered test"
        value={d.met ? 'Met' : 'Not met'}
        detail={[d.p === null ? null : formatPStatement(d.p), yesNo.coxIndex ? `Cox index ${formatNumber(yesNo.coxIndex.value, 2)}, improvement index ${formatSigned(yesNo.coxIndex.improvementIndex, 0)}` : null].filter(Boolean).join('; ') || undefined}
      />
    </dl>
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
      {result.yesNo ? (
        <YesNoFigures result={result} yesNo={result.yesNo} />
      ) : (
        <dl className="grid gap-3 sm:grid-cols-3" aria-label="All schools in the study">
          <KeyFigure label="Effect size (Hedges’ g)" value={d.g === null ? 'Not shown' : formatNumber(d.g, 2)} detail={d.gCi ? `95% interval ${formatNumber(d.gCi[0], 2)} to ${formatNumber(d.gCi[1], 2)}` : undefined} />
          <KeyFigure label="Improvement index" value={d.improvementIndex === null ? 'Not shown' : formatSigned(d.improvementIndex, 0)} detail="percentile points" />
          <KeyFigure label="Pre-registered test" value={d.met ? 'Met' : 'Not met'} detail={d.p === null ? undefined : formatPStatement(d.p)} />
        </dl>
      )}
      <div className="max-w-prose space-y-2">
        {result.sentences.map((s) => (
          <p key={s}>{s}</p>
        ))}
        {result.evidence && (
          <p className="font-semibold" data-testid="evidence-wording">
            {result.evidence}
          </p>
        )}
      </div>
      {result.site ? (
        <div className="max-w-2xl space-y-2">
          <FigureTable
            caption={`${siteName} on its own`}
            columns={[
              { key: 'group', header: 'Group' },
              { key: 'students', header: 'Students analysed', numeric: true },
              { key: 'mean', header: result.yesNo ? 'Answered yes' : 'Average score', numeric: true },
            ]}
            rows={result.site.arms.map((a) => ({
              id: a.arm,
              group: groupLabel(a.arm),
              students: <ReportedCountText count={a.students} />,
              mean: a.mean === null ? <span className="text-ink-muted italic">not shown</span> : result.yesNo ? `${formatNumber(a.mean * 100, 0)} %` : formatNumber(a.mean, 1),
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

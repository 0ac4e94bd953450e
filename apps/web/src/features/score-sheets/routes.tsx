import { idSchema, sheetStateSchema, type RoleGrant, type ScoreSheet, type ScoreSheetDetail } from '@evenhand/entities';
import { useQueries, useQuery, type QueryClient } from '@tanstack/react-query';
import { useId, useState } from 'react';
import { data, Link, useParams, useSearchParams, type LoaderFunctionArgs } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { EmptyState } from '@/components/ui/empty-state';
import { Field, Select } from '@/components/ui/field';
import { PageHeader } from '@/components/ui/page-header';
import { Loading } from '@/components/ui/spinner';
import { useSession } from '@/features/auth/api';
import {
  completionQueryOptions,
  sheetQueryOptions,
  sheetsQueryOptions,
  useSendReminders,
} from '@/features/score-sheets/api';
import { CompletionTable, MatrixTotals, viewOf, type MatrixFilter } from '@/features/score-sheets/components/completion-matrix';
import { byClassroom, ClassroomSheetsTable } from '@/features/score-sheets/components/my-classes';
import { ReviewActions } from '@/features/score-sheets/components/review-actions';
import { RowsEditor } from '@/features/score-sheets/components/rows-editor';
import { SheetRowsTable } from '@/features/score-sheets/components/sheet-rows-table';
import { SheetStateBadge } from '@/features/score-sheets/components/sheet-state-badge';
import { SubmitSheet } from '@/features/score-sheets/components/submit-sheet';
import { SummaryForm } from '@/features/score-sheets/components/summary-form';
import { countsText, nextStep, readOnlyReason, sheetStateLabels } from '@/features/score-sheets/sheet-state';
import { formatDay } from '@/lib/format';
import { areas, hasRole, studyPath } from '@/lib/navigation';
import { wavesQueryOptions } from '@/lib/queries';
import { studiesQueryOptions, useCurrentStudy, useStudyId } from '@/lib/study';

/** Teachers take part in few studies: one page of them is all of them. */
const MY_STUDIES = { limit: 100, offset: 0 };

const holds = (grants: readonly RoleGrant[] | undefined, role: RoleGrant['role']) => hasRole(grants ?? [], role);

// ————— My classes —————

export function myClassesLoader(queryClient: QueryClient) {
  return async () => {
    const studies = await queryClient.ensureQueryData(studiesQueryOptions(MY_STUDIES));
    await Promise.all(studies.items.map((s) => queryClient.ensureQueryData(sheetsQueryOptions({ studyId: s.id }))));
    return null;
  };
}

export function MyClassesPage() {
  const studies = useQuery(studiesQueryOptions(MY_STUDIES));
  const studyList = studies.data?.items ?? [];
  const sheetLists = useQueries({ queries: studyList.map((s) => sheetsQueryOptions({ studyId: s.id })) });
  const all = sheetLists.flatMap((q) => q.data?.items ?? []);
  const returned = all.filter((s) => s.state === 'returned').length;
  const toEnter = all.filter((s) => nextStep(s).kind === 'enter').length;
  const error = studies.error ?? sheetLists.find((q) => q.error)?.error;

  return (
    <>
      <PageHeader
        title="My classes"
        description="Your classrooms that take part in a study, with a score sheet for each wave and measure. Students appear by code only, never by name."
      />
      {error && <Alert tone="error">{error.message}</Alert>}
      {studies.isPending ? (
        <Loading label="Loading your classes…" />
      ) : all.length === 0 && !error ? (
        <EmptyState title="None of your classes is in a study yet">
          <p>
            When the study coordinator adds one of your classrooms to a study, it appears here with a score sheet for each
            data-collection window: a pretest before the intervention starts and a posttest at the end.
          </p>
          <p>
            There is nothing for you to do yet. Once a score sheet opens, you will enter each student's score by student code —
            never a student's name — in a form or from a CSV file.
          </p>
        </EmptyState>
      ) : (
        <div className="space-y-12">
          {(returned > 0 || toEnter > 0) && (
            <Alert tone="info" title="Waiting for you">
              <ul className="list-disc pl-5">
                {returned > 0 && (
                  <li>
                    {returned} sheet{returned === 1 ? ' was' : 's were'} returned by the coordinator for corrections.
                  </li>
                )}
                {toEnter > 0 && (
                  <li>
                    {toEnter} sheet{toEnter === 1 ? ' is' : 's are'} open for scores.
                  </li>
                )}
              </ul>
            </Alert>
          )}
          {studyList.map((study, i) => {
            const sheets = sheetLists[i]?.data?.items ?? [];
            if (!sheets.length) return null;
            return (
              <section key={study.id} aria-labelledby={`study-${study.id}`} className="space-y-6">
                <h2 id={`study-${study.id}`} className="text-2xl font-semibold">
                  {study.title}
                </h2>
                {byClassroom(sheets).map((group) => (
                  <ClassroomSheetsTable key={group.classroomId} study={study} group={group} />
                ))}
              </section>
            );
          })}
        </div>
      )}
    </>
  );
}

// ————— One score sheet —————

export function scoreSheetLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    if (!idSchema.safeParse(params.sheetId).success) throw data(null, { status: 404 });
    await queryClient.ensureQueryData(sheetQueryOptions(params.sheetId!));
    return null;
  };
}

/** A sheet opened inside a study belongs to that study; any other ID is not found there. */
export function studySheetLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    if (!idSchema.safeParse(params.sheetId).success) throw data(null, { status: 404 });
    const sheet = await queryClient.ensureQueryData(sheetQueryOptions(params.sheetId!));
    if (sheet.studyId !== params.studyId) throw data(null, { status: 404 });
    return null;
  };
}

function useSheet(): ScoreSheetDetail {
  const { sheetId } = useParams();
  const sheet = useQuery(sheetQueryOptions(sheetId!));
  // The loader put it in the cache; a failed refetch keeps the last answer.
  return sheet.data!;
}

/** /score-sheets/:sheetId — the teacher's sheet (others see it read-only). */
export function ScoreSheetPage() {
  const sheet = useSheet();
  const grants = useSession().data?.roles;
  const teacher = holds(grants, 'teacher') && !holds(grants, 'coordinator') && !holds(grants, 'research_lead');
  return (
    <>
      <p className="mb-2 text-sm font-semibold">
        {teacher ? <Link to={areas.myClasses.path}>My classes</Link> : <Link to={studyPath(sheet.studyId, 'scoreSheets')}>Score sheets of the study</Link>}
      </p>
      <PageHeader title={`${sheet.classroomName} · ${sheet.waveName}`} description={`The ${sheet.measureName.replace(/ \(.*\)$/, '').toLowerCase()} score sheet of ${sheet.classroomName} for the ${sheet.waveName} wave.`} />
      <SheetBody key={sheet.id} sheet={sheet} role={teacher ? 'teacher' : holds(grants, 'coordinator') ? 'coordinator' : 'reader'} />
    </>
  );
}

/** /studies/:studyId/score-sheets/:sheetId — a sheet opened from the matrix, inside the study. */
export function StudySheetPage() {
  const sheet = useSheet();
  const studyId = useStudyId();
  const grants = useSession().data?.roles;
  return (
    <>
      <p className="mb-2 text-sm font-semibold">
        <Link to={studyPath(studyId, 'scoreSheets')}>All score sheets</Link>
      </p>
      <h2 className="mb-6 text-2xl font-semibold">
        {sheet.classroomName} · {sheet.waveName}
      </h2>
      <SheetBody key={sheet.id} sheet={sheet} role={holds(grants, 'coordinator') ? 'coordinator' : 'reader'} />
    </>
  );
}

function SheetFacts({ sheet }: { sheet: ScoreSheet }) {
  const facts: [string, string][] = [
    ['Measure', sheet.measureName],
    ['Scores', `${sheet.minScore} to ${sheet.maxScore}`],
    ['School', sheet.siteName],
    ['Teacher', sheet.teacherName],
    ['Wave', `${formatDay(sheet.opensOn)} – ${formatDay(sheet.closesOn)}`],
  ];
  return (
    <dl className="flex flex-wrap gap-x-8 gap-y-3">
      {facts.map(([term, value]) => (
        <div key={term}>
          <dt className="text-sm text-ink-muted">{term}</dt>
          <dd className="font-semibold">{value}</dd>
        </div>
      ))}
    </dl>
  );
}

type Viewer = 'teacher' | 'coordinator' | 'reader';

function SheetBody({ sheet, role }: { sheet: ScoreSheetDetail; role: Viewer }) {
  const reason = role === 'teacher' ? readOnlyReason(sheet) : null;
  const editing = role === 'teacher' && sheet.editable;
  return (
    <div className="space-y-8">
      <div className="space-y-4">
        <SheetFacts sheet={sheet} />
        <div className="flex flex-wrap items-center gap-3">
          <SheetStateBadge state={sheet.state} />
          <span className="text-ink-muted">{countsText(sheet.counts, sheet.mode)}</span>
        </div>
      </div>

      {sheet.state === 'returned' && sheet.returnReasons && (
        <section aria-labelledby="returned-heading" className="rounded-lg border-2 border-caution/60 bg-caution-soft px-5 py-4">
          <h2 id="returned-heading" className="font-semibold text-caution">
            Returned by the coordinator
          </h2>
          <p className="mt-1 text-lg whitespace-pre-line">{sheet.returnReasons}</p>
          {role === 'teacher' && <p className="mt-2">Fix what the coordinator describes, then submit the sheet again.</p>}
        </section>
      )}

      {reason && <Alert tone="info" title={`${sheetStateLabels[sheet.state]}: read-only`}>{reason}</Alert>}

      {role === 'coordinator' && <ReviewActions sheet={sheet} />}

      {editing ? <TeacherEntry sheet={sheet} /> : <SheetRowsTable sheet={sheet} />}
    </div>
  );
}

/** Per-student rows, or a class summary where the plan allows it. */
function TeacherEntry({ sheet }: { sheet: ScoreSheetDetail }) {
  const [mode, setMode] = useState(sheet.mode);
  const name = useId();
  return (
    <div className="space-y-6">
      {sheet.summaryAllowed && (
        <fieldset className="space-y-2">
          <legend className="font-semibold">How will you report this sheet?</legend>
          <div className="flex flex-wrap gap-6">
            <label className="flex items-center gap-2">
              <input type="radio" name={name} checked={mode === 'rows'} onChange={() => setMode('rows')} className="size-4 accent-[var(--color-accent)]" />
              A score for each student
            </label>
            <label className="flex items-center gap-2">
              <input type="radio" name={name} checked={mode === 'summary'} onChange={() => setMode('summary')} className="size-4 accent-[var(--color-accent)]" />
              A class summary (n, mean and SD)
            </label>
          </div>
        </fieldset>
      )}
      {mode === 'rows' ? (
        <RowsEditor sheet={sheet} />
      ) : (
        <>
          <SummaryForm sheet={sheet} />
          <div className="flex flex-wrap items-center gap-4">
            <SubmitSheet
              sheet={sheet}
              prepare={async () => (sheet.mode === 'summary' ? null : 'Save the class summary first, then submit it.')}
              summary={sheet.summary ? `A class summary of ${sheet.summary.n} students` : 'A class summary'}
            />
          </div>
        </>
      )}
    </div>
  );
}

// ————— The study's Score sheets tab —————

export function studyScoreSheetsLoader(queryClient: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await queryClient.ensureQueryData(completionQueryOptions(params.studyId!));
    // Only for "not due yet": the matrix stands without them.
    void queryClient.prefetchQuery(wavesQueryOptions(params.studyId!));
    return null;
  };
}

function filterFromSearch(params: URLSearchParams): MatrixFilter {
  const state = sheetStateSchema.safeParse(params.get('state'));
  return {
    siteId: params.get('site') || undefined,
    waveId: params.get('wave') || undefined,
    state: state.success ? state.data : undefined,
  };
}

export function StudyScoreSheetsPage() {
  const study = useCurrentStudy();
  const grants = useSession().data?.roles;
  const coordinator = holds(grants, 'coordinator');
  const matrix = useQuery(completionQueryOptions(study.id));
  const waves = useQuery(wavesQueryOptions(study.id));
  const [params, setParams] = useSearchParams();
  const filter = filterFromSearch(params);

  if (!matrix.data) return matrix.error ? <Alert tone="error">{matrix.error.message}</Alert> : <Loading label="Loading the score sheets…" />;
  if (!matrix.data.rows.length) {
    return (
      <EmptyState title="No score sheets yet">
        <p>
          Every classroom gets a score sheet for each wave and measure. Sheets appear here once the study has classrooms, and its
          plan has measures and waves.
        </p>
      </EmptyState>
    );
  }

  const view = viewOf(matrix.data, filter);
  const sites = [...new Map(matrix.data.rows.map((r) => [r.siteId, r.siteName])).entries()];
  const setFilter = (key: 'site' | 'wave' | 'state', value: string) => {
    const next = new URLSearchParams(params);
    if (value) next.set(key, value);
    else next.delete(key);
    setParams(next, { replace: true });
  };

  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div className="max-w-prose">
          <h2 className="text-2xl font-semibold">Score sheets</h2>
          <p className="mt-1 text-ink-muted">
            {coordinator
              ? 'Every classroom’s sheet for each wave and measure. Open a submitted sheet to accept it or return it to its teacher with your reasons.'
              : 'Every classroom’s sheet for each wave and measure, and how far collection has come. The coordinator accepts and returns sheets.'}
          </p>
        </div>
        {coordinator && <SendReminders studyId={study.id} waves={matrix.data.waves} />}
      </div>

      <div className="flex flex-wrap items-end gap-4" role="group" aria-label="Filter the score sheets">
        <Field label="School" className="w-64">
          {(control) => (
            <Select {...control} value={filter.siteId ?? ''} onChange={(e) => setFilter('site', e.target.value)}>
              <option value="">All schools</option>
              {sites.map(([id, name]) => (
                <option key={id} value={id}>
                  {name}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="Wave" className="w-52">
          {(control) => (
            <Select {...control} value={filter.waveId ?? ''} onChange={(e) => setFilter('wave', e.target.value)}>
              <option value="">All waves</option>
              {matrix.data.waves.map((w) => (
                <option key={w.id} value={w.id}>
                  {w.name}
                </option>
              ))}
            </Select>
          )}
        </Field>
        <Field label="State" className="w-52">
          {(control) => (
            <Select {...control} value={filter.state ?? ''} onChange={(e) => setFilter('state', e.target.value)}>
              <option value="">Any state</option>
              {sheetStateSchema.options.map((s) => (
                <option key={s} value={s}>
                  {sheetStateLabels[s]}
                </option>
              ))}
            </Select>
          )}
        </Field>
        {(filter.siteId || filter.waveId || filter.state) && (
          <Button variant="quiet" onClick={() => setParams({}, { replace: true })}>
            Show all
          </Button>
        )}
      </div>

      <MatrixTotals view={view} />

      {view.classrooms === 0 ? (
        <EmptyState title="No classroom matches these filters" />
      ) : (
        <CompletionTable
          view={view}
          waveDates={waves.data?.items}
          highlight={filter.state}
          sheetHref={(sheetId) => `${studyPath(study.id, 'scoreSheets')}/${sheetId}`}
        />
      )}
    </div>
  );
}

function SendReminders({ studyId, waves }: { studyId: string; waves: { id: string; name: string }[] }) {
  const [open, setOpen] = useState(false);
  const [waveId, setWaveId] = useState('');
  const [notice, setNotice] = useState<string | null>(null);
  const send = useSendReminders(studyId);
  return (
    <div className="flex flex-col items-end gap-2">
      <Button
        variant="secondary"
        onClick={() => {
          send.reset();
          setNotice(null);
          setOpen(true);
        }}
      >
        Send reminders
      </Button>
      <div aria-live="polite" className="max-w-md text-right">
        {notice && <Alert tone="success">{notice}</Alert>}
      </div>
      <Dialog
        open={open}
        title="Send reminders to teachers"
        description="Each teacher with a sheet still open or returned, in a wave that has begun, receives one e-mail listing those sheets."
        onClose={() => setOpen(false)}
      >
        {send.error && (
          <div className="mb-4">
            <Alert tone="error">{send.error.message}</Alert>
          </div>
        )}
        <Field label="Which sheets" className="mb-6 max-w-sm">
          {(control) => (
            <Select {...control} value={waveId} onChange={(e) => setWaveId(e.target.value)}>
              <option value="">Every wave that has begun</option>
              {waves.map((w) => (
                <option key={w.id} value={w.id}>
                  {w.name} only
                </option>
              ))}
            </Select>
          )}
        </Field>
        <div className="flex flex-wrap gap-3">
          <Button
            busy={send.isPending}
            onClick={async () => {
              try {
                const result = await send.mutateAsync(waveId || undefined);
                setOpen(false);
                setNotice(
                  result.teachersReminded === 0
                    ? 'No reminders were needed: no sheet is missing in the waves that have begun.'
                    : `Reminded ${result.teachersReminded} teacher${result.teachersReminded === 1 ? '' : 's'} about ${result.sheetsMissing} sheet${result.sheetsMissing === 1 ? '' : 's'}.`,
                );
              } catch {
                // Shown in the dialog.
              }
            }}
          >
            Send the reminders
          </Button>
          <Button variant="secondary" onClick={() => setOpen(false)}>
            Cancel
          </Button>
        </div>
      </Dialog>
    </div>
  );
}

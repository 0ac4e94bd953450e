import { digestFrequencySchema, digestsQuerySchema, SUPPRESSED_WORDS, type Digest, type DigestsQuery } from '@evenhand/entities';
import { useQuery, useSuspenseQuery, type QueryClient } from '@tanstack/react-query';
import { useId, useState } from 'react';
import { useSearchParams, type LoaderFunctionArgs, type ShouldRevalidateFunction } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { Loading } from '@/components/ui/spinner';
import {
  digestPreferenceQueryOptions,
  digestQueryOptions,
  digestScheduleQueryOptions,
  digestsQueryOptions,
  useSaveDigestPreference,
  useSaveDigestSchedule,
  useSendDigests,
} from '@/features/digests/api';
import { DigestPreview } from '@/features/digests/components/digest-preview';
import { DigestsTable } from '@/features/digests/components/digests-table';
import { PreferenceForm } from '@/features/digests/components/preference-form';
import { ScheduleForm } from '@/features/digests/components/schedule-form';
import { SendNow } from '@/features/digests/components/send-now';
import { formatDateTime } from '@/lib/format';
import { useCurrentStudy, useStudyId } from '@/lib/study';

const PAGE_SIZE = 25;

function queryFromSearch(params: URLSearchParams): DigestsQuery {
  const page = Math.max(1, Math.floor(Number(params.get('page'))) || 1);
  const parsed = digestsQuerySchema.safeParse({ state: params.get('state') || undefined, limit: PAGE_SIZE, offset: (page - 1) * PAGE_SIZE });
  return parsed.success ? parsed.data : { limit: PAGE_SIZE, offset: 0 };
}

function searchFromQuery(query: DigestsQuery): Record<string, string> {
  const search: Record<string, string> = {};
  if (query.state) search.state = query.state;
  if (query.offset > 0) search.page = String(query.offset / query.limit + 1);
  return search;
}

export function digestsLoader(queryClient: QueryClient) {
  return async ({ params, request }: LoaderFunctionArgs) => {
    await Promise.all([
      queryClient.ensureQueryData(digestsQueryOptions(params.studyId!, queryFromSearch(new URL(request.url).searchParams))),
      queryClient.ensureQueryData(digestScheduleQueryOptions(params.studyId!)),
    ]);
    return null;
  };
}

/** Paging and filtering re-query through the table, which keeps the old rows visible meanwhile. */
export const digestsShouldRevalidate: ShouldRevalidateFunction = ({ currentUrl, nextUrl }) => currentUrl.pathname !== nextUrl.pathname;

function PreviewDialog({ digest, onClose }: { digest: Digest | null; onClose: () => void }) {
  const detail = useQuery({ ...digestQueryOptions(digest?.id ?? ''), enabled: digest !== null });
  return (
    <Dialog
      open={digest !== null}
      title="As the principal sees it"
      description={digest ? `${digest.siteName}, made ${formatDateTime(digest.createdAt)}. Links in the preview do not open.` : undefined}
      onClose={onClose}
    >
      {detail.isPending ? (
        <Loading label="Loading the digest…" />
      ) : detail.error ? (
        <Alert tone="error">{detail.error.message}</Alert>
      ) : (
        <DigestPreview digest={detail.data} />
      )}
      <div className="mt-6">
        <Button variant="secondary" onClick={onClose}>
          Close
        </Button>
      </div>
    </Dialog>
  );
}

/** The Digests tab: the outbox with each digest's delivery, a preview, "Send now" and the weekly schedule. */
export function DigestsPage() {
  const studyId = useStudyId();
  const study = useCurrentStudy();
  const [params, setParams] = useSearchParams();
  const query = queryFromSearch(params);
  const digests = useQuery(digestsQueryOptions(studyId, query));
  const { data: schedule } = useSuspenseQuery(digestScheduleQueryOptions(studyId));
  const send = useSendDigests(studyId);
  const save = useSaveDigestSchedule(studyId);
  const [previewing, setPreviewing] = useState<Digest | null>(null);
  const outboxId = useId();
  const scheduleId = useId();

  return (
    <div className="space-y-12">
      <div className="flex flex-wrap items-start justify-between gap-6">
        <p className="max-w-prose text-ink-muted">
          Digests are the e-mails principals receive about their own school: participation, how complete the scores are, what is late, and
          once a result is locked, that result in plain language. Figures based on {SUPPRESSED_WORDS} are never shown.
        </p>
        <SendNow schools={study.counts.sites} onSend={() => send.mutateAsync()} />
      </div>

      <section aria-labelledby={outboxId} className="space-y-4">
        <h2 id={outboxId} className="text-2xl font-semibold tracking-tight">
          Outbox
        </h2>
        <p className="max-w-prose text-ink-muted">
          Each digest is queued, then sent. When the mail server does not answer it is retried with growing waits, and after the last
          attempt it is marked undeliverable.
        </p>
        <DigestsTable
          page={digests.data}
          loading={digests.isPending}
          refreshing={digests.isPlaceholderData}
          error={digests.error}
          query={query}
          onQueryChange={(q) => setParams(searchFromQuery(q))}
          onPreview={setPreviewing}
        />
      </section>

      <section aria-labelledby={scheduleId} className="max-w-3xl space-y-4">
        <h2 id={scheduleId} className="text-2xl font-semibold tracking-tight">
          Weekly schedule
        </h2>
        <ScheduleForm schedule={schedule} onSave={(input) => save.mutateAsync(input)} />
      </section>

      <PreviewDialog digest={previewing} onClose={() => setPreviewing(null)} />
    </div>
  );
}

/** Opened from a digest's "how often" links, without signing in: the link's token says whose choice it is. */
export function EmailPreferencesPage() {
  const [params] = useSearchParams();
  const token = params.get('token') ?? '';
  const suggested = digestFrequencySchema.safeParse(params.get('frequency'));
  const titleId = useId();
  return (
    <section aria-labelledby={titleId} className="w-full max-w-lg rounded-lg border border-line bg-surface p-6 shadow-sm sm:p-8">
      <title>E-mail digests · Evenhand</title>
      <h1 id={titleId} className="text-3xl font-semibold tracking-tight">
        E-mail digests
      </h1>
      <div className="mt-6">
        {token.length < 20 ? (
          <p>This link is missing its code. Open the link from your digest e-mail again.</p>
        ) : (
          <Preferences token={token} suggested={suggested.success ? suggested.data : null} />
        )}
      </div>
    </section>
  );
}

function Preferences({ token, suggested }: { token: string; suggested: ReturnType<typeof digestFrequencySchema.parse> | null }) {
  const current = useQuery(digestPreferenceQueryOptions(token));
  const save = useSaveDigestPreference(token);
  if (current.isPending) return <Loading label="Looking up your digests…" />;
  if (current.error) return <Alert tone="error">{current.error.message}</Alert>;
  return (
    <>
      <p className="mb-5 text-ink-muted">Hello {current.data.name}. Choose how often Evenhand e-mails you a digest about your school.</p>
      <PreferenceForm current={current.data} suggested={suggested} onSave={(f) => save.mutateAsync(f)} />
    </>
  );
}

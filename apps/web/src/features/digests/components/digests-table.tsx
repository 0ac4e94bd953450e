import { digestStates, type Digest, type DigestState, type DigestsQuery } from '@evenhand/entities';
import { createColumnHelper } from '@tanstack/react-table';
import { Button } from '@/components/ui/button';
import { DataTable } from '@/components/ui/data-table';
import { Field, Select } from '@/components/ui/field';
import { DigestStateBadge, digestKindLabels, digestStateLabels } from '@/features/digests/components/digest-state-badge';
import { formatDateTime } from '@/lib/format';

const column = createColumnHelper<Digest>();

function columns(onPreview: (digest: Digest) => void) {
  return [
    column.accessor('createdAt', {
      header: 'Made',
      cell: ({ getValue }) => <span className="whitespace-nowrap">{formatDateTime(getValue())}</span>,
    }),
    column.accessor('recipient', {
      header: 'Principal',
      cell: ({ getValue }) => (
        <span>
          {getValue().name}
          <span className="block text-sm text-ink-muted">{getValue().email}</span>
        </span>
      ),
    }),
    column.accessor('siteName', { header: 'School' }),
    column.accessor('kind', { header: 'Why', cell: ({ getValue }) => digestKindLabels[getValue()] }),
    column.accessor('state', {
      header: 'State',
      cell: ({ row }) => {
        const d = row.original;
        return (
          <div className="space-y-1">
            <DigestStateBadge state={d.state} />
            <p className="text-sm text-ink-muted">
              {d.attempts === 0 ? 'Not tried yet' : `${d.attempts} ${d.attempts === 1 ? 'attempt' : 'attempts'}`}
              {d.state === 'retrying' && d.nextAttemptAt && `; next at ${formatDateTime(d.nextAttemptAt)}`}
            </p>
          </div>
        );
      },
    }),
    column.accessor('lastError', {
      header: 'Last error',
      cell: ({ getValue }) => {
        const error = getValue();
        return error ? <span className="block max-w-xs text-sm break-words">{error}</span> : <span className="text-ink-muted">None</span>;
      },
    }),
    column.accessor('sentAt', {
      header: 'Sent',
      cell: ({ getValue }) => {
        const at = getValue();
        return at ? <span className="whitespace-nowrap">{formatDateTime(at)}</span> : <span className="text-ink-muted">Not yet</span>;
      },
    }),
    column.display({
      id: 'preview',
      header: () => <span className="sr-only">Preview</span>,
      cell: ({ row }) => (
        <Button size="sm" variant="secondary" onClick={() => onPreview(row.original)} aria-label={`Preview the digest to ${row.original.recipient.name}, ${formatDateTime(row.original.createdAt)}`}>
          Preview
        </Button>
      ),
    }),
  ];
}

interface DigestsTableProps {
  page: { items: Digest[]; total: number } | undefined;
  loading: boolean;
  refreshing: boolean;
  error: Error | null;
  query: DigestsQuery;
  onQueryChange: (query: DigestsQuery) => void;
  onPreview: (digest: Digest) => void;
}

/** The outbox: every digest of the study, newest first, with how its delivery went. */
export function DigestsTable({ page, loading, refreshing, error, query, onQueryChange, onPreview }: DigestsTableProps) {
  return (
    <DataTable
      caption="Digests of this study"
      columns={columns(onPreview)}
      rows={page?.items ?? []}
      total={page?.total ?? 0}
      getRowId={(d) => d.id}
      loading={loading}
      refreshing={refreshing}
      error={error}
      itemName={['digest', 'digests']}
      empty={
        query.state
          ? `No digest is ${digestStateLabels[query.state].toLowerCase()}.`
          : 'No digests yet. They are made every week while a wave is open, when a result is locked, and when you press Send now.'
      }
      filters={
        <Field label="State" className="w-52">
          {(control) => (
            <Select
              {...control}
              value={query.state ?? ''}
              onChange={(e) => onQueryChange({ ...query, offset: 0, state: (e.target.value || undefined) as DigestState | undefined })}
            >
              <option value="">All states</option>
              {digestStates.map((s) => (
                <option key={s} value={s}>
                  {digestStateLabels[s]}
                </option>
              ))}
            </Select>
          )}
        </Field>
      }
      pagination={{ pageIndex: Math.floor(query.offset / query.limit), pageSize: query.limit }}
      onPaginationChange={({ pageIndex }) => onQueryChange({ ...query, offset: pageIndex * query.limit })}
    />
  );
}

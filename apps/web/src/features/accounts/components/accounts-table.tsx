import { roleLabels, roles, roleSchema, accountsQuerySchema, type Site, type Account, type AccountsQuery } from '@evenhand/entities';
import { createColumnHelper, type SortingState } from '@tanstack/react-table';
import { useMemo } from 'react';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { DataTable } from '@/components/ui/data-table';
import { Field, Select } from '@/components/ui/field';
import { formatDate, formatDateTime } from '@/lib/format';

const column = createColumnHelper<Account>();

interface AccountsTableProps {
  page: { items: Account[]; total: number } | undefined;
  loading: boolean;
  refreshing: boolean;
  error: Error | null;
  query: AccountsQuery;
  onQueryChange: (changes: Partial<AccountsQuery>) => void;
  sites: Site[];
  onEdit: (account: Account) => void;
}

function StatusBadge({ account }: { account: Account }) {
  if (!account.active) return <Badge tone="muted">Deactivated</Badge>;
  if (account.invitationPending) return <Badge tone="caution">Invitation pending</Badge>;
  return <Badge tone="accent">Active</Badge>;
}

export function AccountsTable(props: AccountsTableProps) {
  const { page, loading, refreshing, error, query, onQueryChange, sites, onEdit } = props;

  const columns = useMemo(() => {
    const siteNames = new Map(sites.map((s) => [s.id, s.name]));
    return [
      column.accessor('name', {
        header: 'Name',
        cell: ({ getValue }) => <span className="font-semibold whitespace-nowrap">{getValue()}</span>,
      }),
      column.accessor('email', { header: 'E-mail address', cell: ({ getValue }) => <span className="whitespace-nowrap">{getValue()}</span> }),
      column.accessor('roles', {
        header: 'Roles',
        enableSorting: false,
        cell: ({ getValue }) => (
          <ul className="min-w-52 space-y-0.5">
            {getValue().map((g) => (
              <li key={`${g.role}:${g.siteId ?? ''}`}>
                {roleLabels[g.role]}
                {g.siteId && <span className="text-ink-muted"> · {siteNames.get(g.siteId) ?? 'Unknown school'}</span>}
              </li>
            ))}
          </ul>
        ),
      }),
      column.display({ id: 'status', header: 'Status', cell: ({ row }) => <StatusBadge account={row.original} /> }),
      column.accessor('lastSignInAt', {
        header: 'Last signed in',
        sortDescFirst: true,
        cell: ({ getValue }) => {
          const at = getValue();
          return at ? <span className="whitespace-nowrap">{formatDateTime(at)}</span> : <span className="text-ink-muted">Never</span>;
        },
      }),
      column.accessor('createdAt', {
        header: 'Added',
        sortDescFirst: true,
        cell: ({ getValue }) => <span className="whitespace-nowrap">{formatDate(getValue())}</span>,
      }),
      column.display({
        id: 'actions',
        header: () => <span className="sr-only">Actions</span>,
        cell: ({ row }) => (
          <Button variant="secondary" size="sm" onClick={() => onEdit(row.original)}>
            Edit<span className="sr-only"> {row.original.name}</span>
          </Button>
        ),
      }),
    ];
  }, [sites, onEdit]);

  const sorting: SortingState = [{ id: query.sort, desc: query.order === 'desc' }];
  const filtered = Boolean(query.q || query.role);

  return (
    <DataTable
      caption="Accounts"
      columns={columns}
      rows={page?.items ?? []}
      total={page?.total ?? 0}
      getRowId={(account) => account.id}
      loading={loading}
      refreshing={refreshing}
      error={error}
      itemName={['account', 'accounts']}
      empty={filtered ? 'No account matches this search. Try fewer letters or another role.' : 'There are no accounts yet.'}
      sorting={sorting}
      onSortingChange={([next]) => {
        const sort = accountsQuerySchema.shape.sort.safeParse(next?.id);
        if (sort.success) onQueryChange({ sort: sort.data, order: next.desc ? 'desc' : 'asc', offset: 0 });
      }}
      pagination={{ pageIndex: Math.floor(query.offset / query.limit), pageSize: query.limit }}
      onPaginationChange={({ pageIndex }) => onQueryChange({ offset: pageIndex * query.limit })}
      search={{
        label: 'Search by name or e-mail',
        value: query.q ?? '',
        onChange: (q) => onQueryChange({ q: q || undefined, offset: 0 }),
      }}
      filters={
        <Field label="Role" className="w-56">
          {(control) => (
            <Select
              {...control}
              value={query.role ?? ''}
              onChange={(e) => {
                const role = roleSchema.safeParse(e.target.value);
                onQueryChange({ role: role.success ? role.data : undefined, offset: 0 });
              }}
            >
              <option value="">All roles</option>
              {roles.map((role) => (
                <option key={role} value={role}>
                  {roleLabels[role]}
                </option>
              ))}
            </Select>
          )}
        </Field>
      }
    />
  );
}

import { accountsQuerySchema, type Account, type AccountsQuery } from '@evenhand/entities';
import { useQuery, type QueryClient } from '@tanstack/react-query';
import { useCallback, useState, type ReactNode } from 'react';
import { useSearchParams, type LoaderFunctionArgs, type ShouldRevalidateFunction } from 'react-router-dom';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';
import { PageHeader } from '@/components/ui/page-header';
import { accountsQueryOptions, useInviteAccount, useUpdateAccount } from '@/features/accounts/api';
import { AccountAccess } from '@/features/accounts/components/account-access';
import { AccountsTable } from '@/features/accounts/components/accounts-table';
import { EditAccountForm } from '@/features/accounts/components/edit-account-form';
import { InviteForm } from '@/features/accounts/components/invite-form';
import { SignInSettings } from '@/features/accounts/components/sign-in-settings';
import { districtSitesQueryOptions } from '@/lib/queries';

const PAGE_SIZE = 25;
const defaults = accountsQuerySchema.parse({ limit: PAGE_SIZE });

/** The table's state lives in the address (?q=&role=&sort=&order=&page=), so it survives reloads and can be shared. */
function queryFromSearch(params: URLSearchParams): AccountsQuery {
  const page = Math.max(1, Math.floor(Number(params.get('page'))) || 1);
  const parsed = accountsQuerySchema.safeParse({
    q: params.get('q') || undefined,
    role: params.get('role') || undefined,
    sort: params.get('sort') || undefined,
    order: params.get('order') || undefined,
    limit: PAGE_SIZE,
    offset: (page - 1) * PAGE_SIZE,
  });
  return parsed.success ? parsed.data : defaults;
}

function searchFromQuery(query: AccountsQuery): Record<string, string> {
  const search: Record<string, string> = {};
  if (query.q) search.q = query.q;
  if (query.role) search.role = query.role;
  if (query.sort !== defaults.sort || query.order !== defaults.order) {
    search.sort = query.sort;
    search.order = query.order;
  }
  if (query.offset > 0) search.page = String(query.offset / query.limit + 1);
  return search;
}

export function accountsLoader(queryClient: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    const query = queryFromSearch(new URL(request.url).searchParams);
    await Promise.all([
      queryClient.ensureQueryData(accountsQueryOptions(query)),
      queryClient.ensureQueryData(districtSitesQueryOptions()),
    ]);
    return null;
  };
}

/** Sorting, filtering and paging re-query through the table, which keeps the old rows visible meanwhile. */
export const accountsShouldRevalidate: ShouldRevalidateFunction = ({ currentUrl, nextUrl }) =>
  currentUrl.pathname !== nextUrl.pathname;

/** `toDo`: what waits for the admin, shown under the title (composed in app/router.tsx). */
export function AccountsPage({ toDo }: { toDo?: ReactNode }) {
  const [params, setParams] = useSearchParams();
  const query = queryFromSearch(params);
  const accounts = useQuery(accountsQueryOptions(query));
  const sites = useQuery(districtSitesQueryOptions());
  const invite = useInviteAccount();
  const update = useUpdateAccount();
  const [inviting, setInviting] = useState(false);
  const [editing, setEditing] = useState<Account | null>(null);
  const [notice, setNotice] = useState<string | null>(null);

  const onQueryChange = (changes: Partial<AccountsQuery>) => setParams(searchFromQuery({ ...query, ...changes }));

  const onEdit = useCallback((account: Account) => {
    setNotice(null);
    setEditing(account);
  }, []);

  const siteList = sites.data?.items ?? [];

  return (
    <>
      <PageHeader
        title="Accounts"
        description="Everyone who can sign in to Evenhand in your district, and what their roles let them do."
        actions={
          <Button
            onClick={() => {
              setNotice(null);
              setInviting(true);
            }}
          >
            Invite a person
          </Button>
        }
      />
      {toDo}

      <div aria-live="polite" className={notice ? 'mb-6' : undefined}>
        {notice && <Alert tone="success">{notice}</Alert>}
      </div>

      <AccountsTable
        page={accounts.data}
        loading={accounts.isPending}
        refreshing={accounts.isPlaceholderData}
        error={accounts.error}
        query={query}
        onQueryChange={onQueryChange}
        sites={siteList}
        onEdit={onEdit}
      />

      <div className="mt-10">
        <SignInSettings />
      </div>

      <Dialog
        open={inviting}
        title="Invite a person"
        description="They receive an e-mail with a link to choose their password. The link works once, within 72 hours."
        onClose={() => setInviting(false)}
      >
        <InviteForm
          sites={siteList}
          onCancel={() => setInviting(false)}
          onInvite={async (input) => {
            const account = await invite.mutateAsync(input);
            setInviting(false);
            setNotice(`An invitation is on its way to ${account.name} at ${account.email}.`);
          }}
        />
      </Dialog>

      <Dialog open={editing !== null} title={`Edit ${editing?.name ?? 'account'}`} onClose={() => setEditing(null)}>
        {editing && (
          <EditAccountForm
            account={editing}
            sites={siteList}
            onCancel={() => setEditing(null)}
            onSave={async (changes) => {
              const account = await update.mutateAsync({ id: editing.id, changes });
              setEditing(null);
              setNotice(`The changes to ${account.name}'s account are saved.`);
            }}
          />
        )}
        {editing && (
          <AccountAccess
            account={editing}
            onSetActive={async (active) => {
              const account = await update.mutateAsync({ id: editing.id, changes: { active } });
              setEditing(null);
              setNotice(active ? `${account.name} can sign in again.` : `${account.name} is deactivated and can no longer sign in.`);
            }}
          />
        )}
      </Dialog>
    </>
  );
}

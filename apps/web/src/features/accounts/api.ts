import {
  pageOf,
  signInSettingsSchema,
  accountSchema,
  type InviteAccount,
  type PasswordSignIn,
  type UpdateAccount,
  type AccountsQuery,
} from '@evenhand/entities';
import { keepPreviousData, queryOptions, useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';

const accountsPageSchema = pageOf(accountSchema);

// No details/detail(id) keys: the API has no single-account read, and the table's rows carry all an edit needs.
export const accountKeys = {
  all: ['accounts'] as const,
  lists: () => [...accountKeys.all, 'list'] as const,
  list: (query: AccountsQuery) => [...accountKeys.lists(), query] as const,
  signInSettings: () => [...accountKeys.all, 'sign-in-settings'] as const,
};

export function accountsQueryOptions(query: AccountsQuery) {
  return queryOptions({
    queryKey: accountKeys.list(query),
    queryFn: ({ signal }) => apiRequest('/accounts', { query, schema: accountsPageSchema, signal }),
    placeholderData: keepPreviousData,
  });
}

export function useInviteAccount() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: InviteAccount) => apiRequest('/accounts', { method: 'POST', body: input, schema: accountSchema }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: accountKeys.lists() }),
  });
}

export function useUpdateAccount() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, changes }: { id: string; changes: UpdateAccount }) =>
      apiRequest(`/accounts/${id}`, { method: 'PATCH', body: changes, schema: accountSchema }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: accountKeys.lists() }),
  });
}

/** Who may sign in with a password, and whether the district's provider is set up. */
export function signInSettingsQueryOptions() {
  return queryOptions({
    queryKey: accountKeys.signInSettings(),
    queryFn: ({ signal }) => apiRequest('/sign-in-settings', { schema: signInSettingsSchema, signal }),
  });
}

export function useUpdateSignInSettings() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (passwordSignIn: PasswordSignIn) =>
      apiRequest('/sign-in-settings', { method: 'PUT', body: { passwordSignIn }, schema: signInSettingsSchema }),
    onSuccess: (settings) => queryClient.setQueryData(accountKeys.signInSettings(), settings),
  });
}

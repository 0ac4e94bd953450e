import {
  acceptedRoleSchema,
  districtSignInProblemSchema,
  loginResponseSchema,
  meResponseSchema,
  messageResponseSchema,
  signInOptionsSchema,
  type LoginRequest,
  type PasswordResetConfirm,
  type SessionUser,
} from '@evenhand/entities';
import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useNavigate } from 'react-router-dom';
import { ApiError, apiRequest } from '@/lib/api-client';

export const authKeys = {
  all: ['auth'] as const,
  session: () => [...authKeys.all, 'session'] as const,
  signInOptions: () => [...authKeys.all, 'sign-in-options'] as const,
  districtProblem: (ticket: string) => [...authKeys.all, 'district-problem', ticket] as const,
};

/** Where "Sign in with your district account" goes: the API, which redirects to the district's provider (a full page load). */
export function districtSignInHref(next: string | null): string {
  return `/api/auth/district/start${next ? `?${new URLSearchParams({ next })}` : ''}`;
}

/** Why the last sign-in with the district account did not succeed (the API's ticket from the redirect back). */
export function districtProblemQueryOptions(ticket: string) {
  return queryOptions({
    queryKey: authKeys.districtProblem(ticket),
    queryFn: ({ signal }) => apiRequest('/auth/district/problem', { query: { ticket }, schema: districtSignInProblemSchema, signal }),
    staleTime: Infinity,
    retry: false,
  });
}

/** What the API lets the sign-in page offer (the demo accounts outside production); it does not change while the API runs. */
export function signInOptionsQueryOptions() {
  return queryOptions({
    queryKey: authKeys.signInOptions(),
    queryFn: ({ signal }) => apiRequest('/auth/sign-in-options', { schema: signInOptionsSchema, signal }),
    staleTime: Infinity,
  });
}

/** The signed-in person, or null when nobody is signed in (the API answers 401). */
async function fetchSessionUser(signal: AbortSignal): Promise<SessionUser | null> {
  try {
    const { user } = await apiRequest('/auth/me', { schema: meResponseSchema, signal });
    return user;
  } catch (error) {
    if (error instanceof ApiError && error.status === 401) return null;
    throw error;
  }
}

export function sessionQueryOptions() {
  return queryOptions({
    queryKey: authKeys.session(),
    queryFn: ({ signal }) => fetchSessionUser(signal),
    staleTime: 5 * 60_000,
  });
}

export function useSession() {
  return useQuery(sessionQueryOptions());
}

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (credentials: LoginRequest) =>
      apiRequest('/auth/login', { method: 'POST', body: credentials, schema: loginResponseSchema }),
    onSuccess: ({ user }) => {
      queryClient.setQueryData(authKeys.session(), user);
    },
  });
}

export function useSignOut() {
  const queryClient = useQueryClient();
  const navigate = useNavigate();
  return useMutation({
    mutationFn: async () => {
      try {
        await apiRequest('/auth/logout', { method: 'POST' });
      } catch (error) {
        // An expired session is already signed out.
        if (!(error instanceof ApiError && error.status === 401)) throw error;
      }
    },
    onSuccess: async () => {
      // Leave the signed-in pages first, so none of them refetches while the cache empties.
      await navigate('/sign-in', { replace: true });
      queryClient.removeQueries();
    },
  });
}

export function useRequestPasswordReset() {
  return useMutation({
    mutationFn: (email: string) =>
      apiRequest('/auth/password-reset', { method: 'POST', body: { email }, schema: messageResponseSchema }),
  });
}

export function useConfirmPasswordReset() {
  return useMutation({
    mutationFn: (input: PasswordResetConfirm) =>
      apiRequest('/auth/password-reset/confirm', { method: 'POST', body: input, schema: messageResponseSchema }),
  });
}

/** Accepts a school role from an e-mailed link; the session's roles are read again afterwards. */
export function useAcceptRole() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (token: string) => apiRequest('/role-invitations/accept', { method: 'POST', body: { token }, schema: acceptedRoleSchema }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: authKeys.session() }),
  });
}

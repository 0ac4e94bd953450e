import type { SessionUser } from '@evenhand/entities';
import type { QueryClient } from '@tanstack/react-query';
import { data, redirect, type LoaderFunction } from 'react-router-dom';
import { sessionQueryOptions } from '@/features/auth/api';
import { canOpen, homePathFor, signInPath, type Area } from '@/lib/navigation';

/** The signed-in person; anyone else is sent to sign in and brought back here afterwards. */
export async function requireUser(queryClient: QueryClient, request: Request): Promise<SessionUser> {
  const user = await queryClient.ensureQueryData(sessionQueryOptions());
  if (!user) {
    const url = new URL(request.url);
    throw redirect(signInPath(url.pathname + url.search));
  }
  return user;
}

/** Opens an area only for the roles the navigation shows it to; the API refuses the rest anyway. */
export function guardArea(queryClient: QueryClient, area: Area, loader?: LoaderFunction): LoaderFunction {
  return async (args) => {
    const user = await requireUser(queryClient, args.request);
    if (!canOpen(area, user.roles)) throw data({ area: area.label }, { status: 403 });
    return loader ? loader(args) : null;
  };
}

export function homeLoader(queryClient: QueryClient): LoaderFunction {
  return async ({ request }) => {
    const home = homePathFor((await requireUser(queryClient, request)).roles);
    return home ? redirect(home) : null;
  };
}

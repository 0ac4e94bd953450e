import type { Role, RoleGrant } from '@evenhand/entities';

export interface Area {
  path: string;
  label: string;
  roles: readonly Role[];
}

/** The signed-in areas and who may open them; the router guards with the same table the navigation shows. */
export const areas = {
  myClasses: { path: '/my-classes', label: 'My classes', roles: ['teacher'] },
  mySchool: { path: '/my-school', label: 'My school', roles: ['principal'] },
  studies: { path: '/studies', label: 'Studies', roles: ['coordinator', 'research_lead', 'reviewer'] },
  accounts: { path: '/accounts', label: 'Accounts', roles: ['admin'] },
  audit: { path: '/audit', label: 'Audit', roles: ['admin', 'research_lead', 'reviewer'] },
} satisfies Record<string, Area>;

/** In navigation order; a person's home is the first area their roles open. */
const navigationOrder: Area[] = [areas.myClasses, areas.mySchool, areas.studies, areas.accounts, areas.audit];

export function canOpen(area: Area, grants: readonly RoleGrant[]): boolean {
  return grants.some((g) => area.roles.includes(g.role));
}

export function navigationFor(grants: readonly RoleGrant[]): Area[] {
  return navigationOrder.filter((area) => canOpen(area, grants));
}

/** Where a person lands after signing in; null when their account has no role yet. */
export function homePathFor(grants: readonly RoleGrant[]): string | null {
  return navigationFor(grants)[0]?.path ?? null;
}

export function signInPath(returnTo?: string): string {
  return returnTo && returnTo !== '/' ? `/sign-in?next=${encodeURIComponent(returnTo)}` : '/sign-in';
}

/** Only a path inside this app, so a crafted sign-in link cannot send anyone to another site. */
export function safeReturnPath(next: string | null): string | null {
  if (!next || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) return null;
  if (next.startsWith('/sign-in')) return null;
  return next;
}

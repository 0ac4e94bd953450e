import { districtWideRoles, studyReaderRoles, studyWriterRoles, type Role, type RoleGrant } from '@evenhand/entities';

export interface Area {
  path: string;
  label: string;
  roles: readonly Role[];
  /** Roles that land here after signing in, when not all of `roles` should (default: all of them). */
  homeFor?: readonly Role[];
}

/** The signed-in areas and who may open them; the router guards with the same table the navigation shows. */
export const areas = {
  myClasses: { path: '/my-classes', label: 'My classes', roles: ['teacher'] },
  mySchool: { path: '/my-school', label: 'My school', roles: ['principal'] },
  // The admin can read studies, but their work starts in Accounts.
  studies: { path: '/studies', label: 'Studies', roles: districtWideRoles, homeFor: studyReaderRoles },
  accounts: { path: '/accounts', label: 'Accounts', roles: ['admin'] },
  audit: { path: '/audit', label: 'Audit', roles: ['admin', 'research_lead', 'reviewer'] },
  // Not in the navigation: a teacher opens a sheet from My classes, the others from a study's Score sheets.
  scoreSheet: { path: '/score-sheets/:sheetId', label: 'Score sheet', roles: ['teacher', ...studyWriterRoles] },
} satisfies Record<string, Area>;

/** In navigation order; a person's home is the first area their roles open. */
const navigationOrder: Area[] = [areas.myClasses, areas.mySchool, areas.studies, areas.accounts, areas.audit];

/** Whether any of the person's grants is one of these roles, e.g. to show an edit button the API would allow. */
export function hasRole(grants: readonly RoleGrant[], ...roles: Role[]): boolean {
  return grants.some((g) => roles.includes(g.role));
}

export function canOpen(area: Area, grants: readonly RoleGrant[]): boolean {
  return grants.some((g) => area.roles.includes(g.role));
}

export function navigationFor(grants: readonly RoleGrant[]): Area[] {
  return navigationOrder.filter((area) => canOpen(area, grants));
}

/** Where a person lands after signing in; null when their account has no role yet. */
export function homePathFor(grants: readonly RoleGrant[]): string | null {
  return navigationOrder.find((area) => grants.some((g) => (area.homeFor ?? area.roles).includes(g.role)))?.path ?? null;
}

/**
 * The tabs of a study (its top navigation), in order, with the roles the API lets read each one.
 * `path` is the segment under /studies/:studyId; the router guards each tab with this table and the
 * study's navigation shows the same, so a tab page only needs its route in app/router.tsx.
 */
export const studyTabs = {
  overview: { path: 'overview', label: 'Overview', roles: districtWideRoles },
  plan: { path: 'plan', label: 'Plan', roles: studyReaderRoles },
  sites: { path: 'sites', label: 'Sites & classes', roles: studyReaderRoles },
  draw: { path: 'draw', label: 'Draw', roles: studyReaderRoles },
  scoreSheets: { path: 'score-sheets', label: 'Score sheets', roles: studyWriterRoles },
  checks: { path: 'checks', label: 'Checks', roles: ['research_lead', 'reviewer'] },
  comparisons: { path: 'comparisons', label: 'Comparisons', roles: ['research_lead', 'reviewer'] },
  digests: { path: 'digests', label: 'Digests', roles: studyWriterRoles },
  audit: { path: 'audit', label: 'Audit', roles: ['admin', 'research_lead', 'reviewer'] },
} satisfies Record<string, Area>;

export type StudyTab = keyof typeof studyTabs;

export function studyTabsFor(grants: readonly RoleGrant[]): Area[] {
  return Object.values(studyTabs).filter((tab) => canOpen(tab, grants));
}

/** The address of a study, or of one of its tabs. */
export function studyPath(studyId: string, tab?: StudyTab): string {
  const base = `${areas.studies.path}/${studyId}`;
  return tab ? `${base}/${studyTabs[tab].path}` : base;
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

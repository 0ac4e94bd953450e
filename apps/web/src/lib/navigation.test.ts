import type { Role, RoleGrant } from '@evenhand/entities';
import { describe, expect, it } from 'vitest';
import { homePathFor, navigationFor, safeReturnPath, signInPath, studyPath, studyTabsFor } from '@/lib/navigation';

const site = '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11';
const grant = (role: Role): RoleGrant => ({ role, siteId: role === 'teacher' || role === 'principal' ? site : null });

describe('homePathFor', () => {
  it.each([
    ['teacher', '/my-classes'],
    ['principal', '/my-school'],
    ['research_lead', '/studies'],
    ['coordinator', '/studies'],
    ['reviewer', '/studies'],
    ['admin', '/accounts'],
  ] as const)('sends a %s to %s', (role, path) => {
    expect(homePathFor([grant(role)])).toBe(path);
  });

  it('sends a person who teaches and leads a school to My classes', () => {
    expect(homePathFor([grant('principal'), grant('teacher')])).toBe('/my-classes');
  });

  it('has no home for an account without roles', () => {
    expect(homePathFor([])).toBeNull();
  });
});

describe('navigationFor', () => {
  it.each([
    ['admin', ['Studies', 'Accounts', 'Audit']],
    ['coordinator', ['Studies']],
    ['research_lead', ['Studies', 'Audit']],
    ['teacher', ['My classes']],
    ['principal', ['My school']],
    ['reviewer', ['Studies', 'Audit']],
  ] as const)('shows a %s %j', (role, labels) => {
    expect(navigationFor([grant(role)]).map((a) => a.label)).toEqual(labels);
  });

  it('lists an area once for a person whose roles both open it', () => {
    expect(navigationFor([grant('admin'), grant('research_lead')]).map((a) => a.label)).toEqual(['Studies', 'Accounts', 'Audit']);
  });
});

describe('studyTabsFor', () => {
  it.each([
    ['admin', ['Overview', 'Audit']],
    ['coordinator', ['Overview', 'Plan', 'Sites & classes', 'Draw', 'Score sheets', 'Digests']],
    ['research_lead', ['Overview', 'Plan', 'Sites & classes', 'Draw', 'Score sheets', 'Checks', 'Comparisons', 'Digests', 'Audit']],
    ['reviewer', ['Overview', 'Plan', 'Sites & classes', 'Draw', 'Checks', 'Comparisons', 'Audit']],
    ['teacher', []],
  ] as const)('shows a %s the tabs %j', (role, labels) => {
    expect(studyTabsFor([grant(role)]).map((t) => t.label)).toEqual(labels);
  });

  it('builds the address of a tab', () => {
    expect(studyPath('s1', 'scoreSheets')).toBe('/studies/s1/score-sheets');
  });
});

describe('return paths', () => {
  it('keeps the intended path in the sign-in link', () => {
    expect(signInPath('/accounts?role=teacher')).toBe('/sign-in?next=%2Faccounts%3Frole%3Dteacher');
  });

  it('refuses paths that would leave the app', () => {
    expect(safeReturnPath('https://elsewhere.example')).toBeNull();
    expect(safeReturnPath('//elsewhere.example')).toBeNull();
    expect(safeReturnPath('/audit')).toBe('/audit');
  });
});

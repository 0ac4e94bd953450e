import { describe, expect, it } from 'vitest';
import { inviteAccountSchema, updateAccountSchema } from '../index.js';

const site = '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11';

describe('inviteAccountSchema', () => {
  it('accepts a district-wide role without a site and lower-cases the e-mail', () => {
    const parsed = inviteAccountSchema.parse({ email: ' Lead@Example.ORG ', name: 'A. Lead', roles: [{ role: 'research_lead' }] });
    expect(parsed.email).toBe('lead@example.org');
    expect(parsed.roles).toEqual([{ role: 'research_lead', siteId: null }]);
  });

  it('refuses a teacher grant without a site', () => {
    const result = inviteAccountSchema.safeParse({ email: 't@example.org', name: 'T', roles: [{ role: 'teacher' }] });
    expect(result.success).toBe(false);
    expect(result.error?.issues[0].path).toEqual(['roles', 0, 'siteId']);
  });

  it('refuses the same grant twice', () => {
    const grant = { role: 'principal', siteId: site };
    expect(inviteAccountSchema.safeParse({ email: 'p@example.org', name: 'P', roles: [grant, grant] }).success).toBe(false);
  });
});

describe('updateAccountSchema', () => {
  it('refuses an empty change', () => {
    expect(updateAccountSchema.safeParse({}).success).toBe(false);
  });
});

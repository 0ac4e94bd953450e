import { describe, expect, it } from 'vitest';
import { nextStep, readOnlyReason } from '@/features/score-sheets/sheet-state';
import { sheetFixture } from '@/features/score-sheets/test-support';

const during = '2026-05-01';
const after = '2026-06-01';
const before = '2026-04-01';

describe('nextStep', () => {
  it('asks for scores while the wave is open, and to fix a returned sheet with the coordinator’s reasons', () => {
    expect(nextStep(sheetFixture(), during)).toEqual({ kind: 'enter', label: 'Enter scores' });
    expect(nextStep(sheetFixture({ state: 'returned', returnReasons: 'LV-1 looks wrong' }), after)).toEqual({
      kind: 'fix',
      label: 'Fix and resubmit',
      reasons: 'LV-1 looks wrong',
    });
  });

  it('says who has the sheet once it is sent, and when a wave opens or has closed', () => {
    expect(nextStep(sheetFixture({ state: 'submitted', editable: false }), during).label).toBe('Waiting for the coordinator');
    expect(nextStep(sheetFixture({ state: 'accepted', editable: false }), during).label).toBe('Accepted');
    expect(nextStep(sheetFixture({ editable: false }), before).label).toMatch(/^Wave opens on /);
    expect(nextStep(sheetFixture({ editable: false }), after).label).toBe('Wave closed');
  });
});

describe('readOnlyReason', () => {
  it('explains why a sheet cannot change, most binding reason first', () => {
    expect(readOnlyReason(sheetFixture(), during)).toBeNull();
    expect(readOnlyReason(sheetFixture({ state: 'accepted', editable: false, locked: true }), during)).toMatch(/locked result/);
    expect(readOnlyReason(sheetFixture({ state: 'accepted', editable: false }), during)).toMatch(/accepted/);
    expect(readOnlyReason(sheetFixture({ state: 'submitted', editable: false }), during)).toMatch(/waiting for the coordinator/);
    expect(readOnlyReason(sheetFixture({ editable: false }), after)).toMatch(/wave closed on/);
  });
});

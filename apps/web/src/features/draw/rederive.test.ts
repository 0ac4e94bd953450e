import { blockedDraw } from '@evenhand/stats';
import { describe, expect, it } from 'vitest';
import { rederiveInBrowser } from '@/features/draw/rederive';

const blocks = [
  { blockId: 'site-a', unitIds: ['a1', 'a2', 'a3', 'a4'] },
  { blockId: 'site-b', unitIds: ['b1', 'b2', 'b3'] },
];

function recorded(seed: string) {
  const result = blockedDraw({ seed, blocks, arms: ['intervention', 'comparison'] });
  return {
    seed,
    algorithm: result.algorithm,
    algorithmVersion: result.version,
    blocks,
    assignments: result.assignments.map((a) => ({ ...a, unitName: `Room ${a.unitId}`, arm: a.arm as 'intervention' | 'comparison' })),
  };
}

describe('rederiveInBrowser', () => {
  it('finds a recorded draw identical to what its seed gives', () => {
    expect(rederiveInBrowser(recorded('larkspur-valley-2025'))).toEqual({ comparable: true, identical: true, units: 7, differing: [] });
  });

  it('names the units whose recorded arm is not what the seed gives', () => {
    const draw = recorded('larkspur-valley-2025');
    draw.assignments[2] = { ...draw.assignments[2], arm: draw.assignments[2].arm === 'intervention' ? 'comparison' : 'intervention' };
    expect(rederiveInBrowser(draw)).toEqual({ comparable: true, identical: false, units: 7, differing: [draw.assignments[2].unitName] });
  });

  it('finds a draw recorded under another seed different', () => {
    const draw = { ...recorded('one seed'), seed: 'another seed' };
    const result = rederiveInBrowser(draw);
    expect(result.comparable && result.identical).toBe(false);
  });

  it('does not compare a draw made by another algorithm version', () => {
    const result = rederiveInBrowser({ ...recorded('s'), algorithmVersion: '2' });
    expect(result).toMatchObject({ comparable: false });
  });
});

import type { Draw } from '@evenhand/entities';
import { blockedDraw } from '@evenhand/stats';
import { render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { describe, expect, it, vi } from 'vitest';
import { VerifyDraw } from '@/features/draw/components/verify-draw';

const studyId = '5b0c7a1e-2f4d-4e6a-9b8c-1d2e3f4a5b6c';
const siteId = '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11';
const units = ['0b7a4c55-8f0e-4a5e-9d55-6f1f3c2b9a10', '1c8b5d66-9a1f-4b6f-8e66-7a2a4d3c0b21', '2d9c6e77-0b2a-4c7a-9f77-8b3b5e4d1c32', '3e0d7f88-1c3b-4d8b-8a88-9c4c6f5e2d43'];
const seed = 'larkspur-valley-2025';

function committedDraw(overrides: Partial<Draw> = {}): Draw {
  const result = blockedDraw({ seed, blocks: [{ blockId: siteId, unitIds: units }], arms: ['intervention', 'comparison'] });
  return {
    id: '4f1e8a99-2d4c-4e9c-9b99-0d5d7a6f3e54',
    studyId,
    committed: true,
    seed,
    algorithm: result.algorithm,
    algorithmVersion: result.version,
    unit: 'classroom',
    blocks: [{ blockId: siteId, unitIds: units }],
    assignments: result.assignments.map((a, i) => ({ blockId: a.blockId, unitId: a.unitId, unitName: `Room ${i + 1}`, arm: a.arm as 'intervention' | 'comparison' })),
    balance: [],
    committedAt: '2026-09-20T08:00:00.000Z',
    committedBy: { id: '5a2f9b00-3e5d-4f0d-8c00-1e6e8b7a4f65', name: 'Corin Tallowmere' },
    verified: true,
    reassignments: [],
    ...overrides,
  };
}

async function verify(draw: Draw) {
  const onFetch = vi.fn().mockResolvedValue(draw);
  render(<VerifyDraw onFetch={onFetch} />);
  await userEvent.setup().click(screen.getByRole('button', { name: 'Verify the draw' }));
  return onFetch;
}

describe('VerifyDraw', () => {
  it('fetches the draw again and reports both the server and the browser re-deriving it identically', async () => {
    const onFetch = await verify(committedDraw());
    expect(onFetch).toHaveBeenCalledTimes(1);
    expect(await screen.findByText('The draw is what its seed gives')).toBeInTheDocument();
    expect(screen.getByText('Re-derived from the seed by Evenhand’s server: identical.')).toBeInTheDocument();
    expect(screen.getByText('Re-derived in your browser from the seed: identical, all 4 units in the same arm.')).toBeInTheDocument();
  });

  it('catches a recorded assignment the seed does not give, even when the server says it verified', async () => {
    const draw = committedDraw();
    draw.assignments[1] = { ...draw.assignments[1], arm: draw.assignments[1].arm === 'intervention' ? 'comparison' : 'intervention' };
    await verify(draw);
    expect(await screen.findByRole('alert')).toHaveTextContent('The draw does not match its seed');
    expect(screen.getByText('Re-derived in your browser from the seed: 1 of 4 units differ (Room 2).')).toBeInTheDocument();
  });

  it("reports the server's failed re-derivation", async () => {
    await verify(committedDraw({ verified: false }));
    expect(await screen.findByText('Re-derived from the seed by Evenhand’s server: it differs from the recorded assignment.')).toBeInTheDocument();
  });
});

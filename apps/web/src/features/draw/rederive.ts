import type { Draw } from '@evenhand/entities';
import { blockedDraw } from '@evenhand/stats';

export type Rederivation =
  | { comparable: true; identical: boolean; units: number; differing: string[] }
  | { comparable: false; reason: string };

/**
 * Runs the recorded seed through the same blocked draw the server uses (@evenhand/stats, here in the
 * browser) and compares the result with the recorded assignment, unit by unit.
 */
export function rederiveInBrowser(draw: Pick<Draw, 'seed' | 'algorithm' | 'algorithmVersion' | 'blocks' | 'assignments'>): Rederivation {
  let result: ReturnType<typeof blockedDraw>;
  try {
    result = blockedDraw({ seed: draw.seed, blocks: draw.blocks, arms: ['intervention', 'comparison'] });
  } catch (error) {
    return { comparable: false, reason: error instanceof Error ? error.message : 'The draw could not be re-derived.' };
  }
  if (result.algorithm !== draw.algorithm || result.version !== draw.algorithmVersion) {
    return {
      comparable: false,
      reason: `The draw was made with ${draw.algorithm} version ${draw.algorithmVersion}; this browser has ${result.algorithm} version ${result.version}.`,
    };
  }
  const derived = new Map(result.assignments.map((a) => [a.unitId, a.arm]));
  const differing = draw.assignments.filter((a) => derived.get(a.unitId) !== a.arm).map((a) => a.unitName);
  const identical = differing.length === 0 && derived.size === draw.assignments.length;
  return { comparable: true, identical, units: draw.assignments.length, differing };
}

import { mdes, power } from '@evenhand/stats';
import { describe, expect, it } from 'vitest';
import { planningFigures, type PlanningValues } from '@/features/plan/planning';

const plan: PlanningValues = {
  alpha: 0.05,
  alternative: 'two-sided',
  shareIntervention: 0.5,
  smallestEffectOfInterest: 0.25,
  plannedSites: 6,
  plannedClassrooms: 24,
  plannedStudentsPerClassroom: 25,
  covariate: 'baseline',
  covariateR2: 0.5,
  iccSource: 'default',
  icc: null,
  primaryTest: 'welch',
};

function figures(values: Partial<PlanningValues>, unit: 'student' | 'classroom' | 'school' = 'classroom') {
  const result = planningFigures({ ...plan, ...values }, { unit, measureKind: 'achievement' });
  if (!result.ok) throw new Error(result.problem);
  return result;
}

describe('planningFigures', () => {
  it('treats drawn classrooms as clusters of their students, with the ICC and the student-level R²', () => {
    expect(figures({}).design).toEqual({ design: 'cluster', clusters: 24, clusterSize: 25, icc: 0.2, r2Level1: 0.5, covariates: 0, p: 0.5, alpha: 0.05, alternative: 'two-sided' });
  });

  it('when the two-level model is registered, spends one degree of freedom per school block beyond the first (J − g* − 2, Dong & Maynard 2013)', () => {
    const f = figures({ primaryTest: 'two-level' });
    expect(f.design).toMatchObject({ design: 'cluster', clusters: 24, covariates: 5 });
    // The same MDES as the engine's for 24 clusters with 5 cluster-level covariates; wider than without blocks.
    expect(f.mdes).toBeCloseTo(mdes({ design: 'cluster', clusters: 24, clusterSize: 25, icc: 0.2, r2Level1: 0.5, covariates: 5, p: 0.5, power: 0.8 }).mdes, 12);
    expect(f.mdes).toBeGreaterThan(figures({}).mdes);
    expect(f.curve[0].unitsPerArm).toBe(4);
    const tooFew = planningFigures({ ...plan, primaryTest: 'two-level', plannedClassrooms: 6 }, { unit: 'classroom', measureKind: 'achievement' });
    expect(tooFew).toMatchObject({ ok: false, problem: 'With 6 schools as blocks, plan at least 8 classrooms so the model keeps degrees of freedom.' });
  });

  it('treats drawn schools as clusters of all their students', () => {
    const f = figures({}, 'school');
    expect(f.design).toMatchObject({ design: 'cluster', clusters: 6, clusterSize: 100 });
    expect(f.unitsPerArm).toBe(3);
  });

  it('uses the individual design when students are drawn, the baseline counting as one covariate', () => {
    expect(figures({}, 'student').design).toMatchObject({ design: 'individual', n: 600, r2: 0.5, covariates: 1 });
  });

  it('reads a one-sided plan as a one-sided test and ignores the R² when nothing is adjusted for', () => {
    const f = figures({ alternative: 'greater', covariate: 'none' });
    expect(f.design).toMatchObject({ alternative: 'one-sided', r2Level1: 0 });
    expect(f.mdes).toBeCloseTo(mdes({ ...f.design, power: 0.8 }).mdes, 12);
  });

  it('finds the fewest classrooms per arm whose MDES reaches the smallest effect of interest', () => {
    const f = figures({ iccSource: 'assumed', icc: 0.15 });
    const needed = f.unitsPerArmNeeded!;
    const at = (perArm: number) => mdes({ ...f.design, clusters: perArm * 2, power: 0.8 } as Parameters<typeof mdes>[0]).mdes;
    expect(at(needed)).toBeLessThanOrEqual(0.25);
    expect(at(needed - 1)).toBeGreaterThan(0.25);
    expect(f.power).toBeCloseTo(power({ ...f.design, effectSize: 0.25 }).power, 12);
  });

  it('asks for at least two classrooms per arm', () => {
    expect(planningFigures({ ...plan, plannedClassrooms: 3 }, { unit: 'classroom', measureKind: null })).toEqual({
      ok: false,
      problem: 'Plan at least four classrooms, two in each arm.',
    });
  });
});

import { describe, expect, it } from 'vitest';
import { expectClose, fixture } from '../test/fixtures.js';
import { fixedEffect, randomEffects } from './meta.js';

describe('pooling across sites against statsmodels combine_effects (method_re="dl")', () => {
  for (const c of fixture.meta) {
    it(c.id, () => {
      const fe = fixedEffect(c.estimates);
      const re = randomEffects(c.estimates);
      const e = c.expected;
      expectClose(fe.estimate, e.fixed.estimate, 1e-12, 1e-15, 'FE estimate');
      expectClose(fe.se, e.fixed.se, 1e-12, 0, 'FE se');
      expectClose(fe.ci[0], e.fixed.ci[0], 1e-10, 1e-14, 'FE ci');
      expectClose(fe.ci[1], e.fixed.ci[1], 1e-10, 1e-14, 'FE ci');
      expectClose(re.estimate, e.random.estimate, 1e-12, 1e-15, 'RE estimate');
      expectClose(re.se, e.random.se, 1e-12, 0, 'RE se');
      expectClose(re.ci[0], e.random.ci[0], 1e-10, 1e-14, 'RE ci');
      expectClose(re.tau2, e.random.tau2, 1e-10, 1e-15, 'tau²');
      expectClose(fe.q, e.q, 1e-12, 0, 'Q');
      expectClose(re.i2, e.i2, 1e-10, 1e-15, 'I²');
      expectClose(fe.pQ, e.pQ, 1e-10, 1e-15, 'p of Q');
      expectClose(re.weights.reduce((p, w) => p + w, 0), 1, 1e-14, 0, 'weights');
    });
  }

  it('with τ² = 0 the random-effects result equals the fixed-effect one (identity)', () => {
    const c = fixture.meta.find((x) => x.id === 'homogeneous')!;
    const re = randomEffects(c.estimates);
    expect(re.tau2).toBe(0);
    expect(re.estimate).toBe(fixedEffect(c.estimates).estimate);
  });

  it('refuses fewer than 2 estimates and non-positive variances', () => {
    expect(() => fixedEffect([{ y: 0.1, v: 0.01 }])).toThrow(/at least 2/);
    expect(() => randomEffects([{ y: 0.1, v: 0.01 }, { y: 0.2, v: 0 }])).toThrow(/estimate 2 needs a finite sampling variance/);
    expect(() => randomEffects([{ y: NaN, v: 0.01 }, { y: 0.2, v: 0.1 }])).toThrow(/non-finite y/);
  });
});

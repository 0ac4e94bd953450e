import { StatsInputError } from './errors.js';

export interface BenjaminiHochbergResult {
  /** BH-adjusted p-values (q-values), in the input order. */
  adjusted: number[];
  /** adjusted ≤ q, in the input order. */
  rejected: boolean[];
  q: number;
  rejections: number;
}

/**
 * Benjamini–Hochberg step-up procedure controlling the false discovery rate at q within one outcome domain:
 * adjusted p_(i) = min_{j ≥ i} min(1, m·p_(j)/j); reject when adjusted ≤ q (Benjamini & Hochberg 1995, JRSS-B 57:289–300;
 * WWC practice per Schochet 2008 — V).
 */
export function benjaminiHochberg(values: ArrayLike<number>, q = 0.05): BenjaminiHochbergResult {
  // Any array of numbers, typed arrays included (a Float64Array of p-values is as valid as a plain array).
  if (!Array.isArray(values) && !ArrayBuffer.isView(values)) throw new StatsInputError('benjaminiHochberg needs an array of p-values');
  const pValues = Array.from(values);
  if (pValues.length === 0) throw new StatsInputError('benjaminiHochberg needs at least one p-value');
  if (typeof q !== 'number' || !(q > 0 && q < 1)) throw new StatsInputError(`benjaminiHochberg: q must be strictly between 0 and 1 (got ${String(q)})`);
  pValues.forEach((p, i) => {
    if (typeof p !== 'number' || !(p >= 0 && p <= 1)) throw new StatsInputError(`benjaminiHochberg: p-value ${i + 1} must be in [0, 1] (got ${String(p)})`);
  });
  const m = pValues.length;
  const order = pValues.map((_, i) => i).sort((a, b) => pValues[a] - pValues[b] || a - b);
  const adjusted = new Array<number>(m);
  let running = 1;
  for (let r = m - 1; r >= 0; r--) {
    const i = order[r];
    // p·(m/j) rather than m·p/j: m/j ≥ 1 exactly, so the adjusted value can never round below the raw one.
    running = Math.min(running, pValues[i] * (m / (r + 1)));
    adjusted[i] = Math.min(1, running);
  }
  const rejected = adjusted.map((p) => p <= q);
  return { adjusted, rejected, q, rejections: rejected.filter(Boolean).length };
}

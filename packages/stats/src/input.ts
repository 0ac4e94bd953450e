import { StatsInputError } from './errors.js';

/** A sample of observations: a plain array or a typed array (Float64Array is the fast path). */
export type Sample = ArrayLike<number>;

/** Direction of the alternative hypothesis, for group a relative to group b (a − b). */
export type Alternative = 'two-sided' | 'greater' | 'less';

export const ALTERNATIVES: readonly Alternative[] = ['two-sided', 'greater', 'less'];

/** Throws unless `value` is array-like with at least `min` entries. */
export function requireSample(value: unknown, label: string, min = 2): asserts value is Sample {
  if (value === null || typeof value !== 'object' || typeof (value as Sample).length !== 'number') {
    throw new StatsInputError(`${label} must be an array of numbers`);
  }
  const n = (value as Sample).length;
  if (n < min) {
    throw new StatsInputError(`${label} has fewer than ${min} finite values (got ${n})`);
  }
}

/** Finds the first non-finite entry (for the error message once a fast pass has seen one). */
export function describeNonFinite(x: Sample, label: string): StatsInputError {
  for (let i = 0; i < x.length; i++) {
    const v = x[i];
    if (typeof v !== 'number') return new StatsInputError(`${label} has a non-number value at index ${i}`);
    if (!Number.isFinite(v)) return new StatsInputError(`${label} has a non-finite value (${v}) at index ${i}`);
  }
  return new StatsInputError(`${label}: values are too large to square without overflow`);
}

/** Plain arrays may hold null or strings from JSON; typed arrays cannot, so only plain arrays pay for this check. */
export function requirePlainNumbers(x: Sample, label: string): void {
  for (let i = 0; i < x.length; i++) {
    if (typeof x[i] !== 'number') throw describeNonFinite(x, label);
  }
}

/** Copies a sample into a new Float64Array, throwing on any non-finite value. */
export function toCheckedFloat64(x: Sample, label: string, min = 2): Float64Array {
  requireSample(x, label, min);
  const out = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) {
    const v = x[i];
    if (typeof v !== 'number' || !Number.isFinite(v)) throw describeNonFinite(x, label);
    out[i] = v;
  }
  return out;
}

/** Validates an options object: must be a plain object whose keys are all known. */
export function checkOptions<T extends object>(opts: T | undefined, allowed: readonly string[], fn: string): Partial<T> {
  if (opts === undefined || opts === null) return {};
  if (typeof opts !== 'object' || Array.isArray(opts)) throw new StatsInputError(`${fn}: options must be an object`);
  for (const key of Object.keys(opts)) {
    if (!allowed.includes(key)) {
      throw new StatsInputError(`${fn}: unknown option "${key}" (allowed: ${allowed.join(', ')})`);
    }
  }
  return opts;
}

export function readAlternative(value: unknown, fn: string): Alternative {
  if (value === undefined) return 'two-sided';
  if (!ALTERNATIVES.includes(value as Alternative)) {
    throw new StatsInputError(`${fn}: alternative must be one of ${ALTERNATIVES.join(', ')} (got ${String(value)})`);
  }
  return value as Alternative;
}

export function readConfidence(value: unknown, fn: string, fallback = 0.95): number {
  if (value === undefined) return fallback;
  if (typeof value !== 'number' || !(value > 0 && value < 1)) {
    throw new StatsInputError(`${fn}: confidence must be a number strictly between 0 and 1 (got ${String(value)})`);
  }
  return value;
}

export function readProbability(value: unknown, name: string, fallback: number, open = true): number {
  if (value === undefined) return fallback;
  const ok = typeof value === 'number' && (open ? value > 0 && value < 1 : value >= 0 && value <= 1);
  if (!ok) {
    throw new StatsInputError(`${name} must be a number ${open ? 'strictly between 0 and 1' : 'in [0, 1]'} (got ${String(value)})`);
  }
  return value as number;
}

export function requireFiniteNumber(value: unknown, name: string): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new StatsInputError(`${name} must be a finite number (got ${String(value)})`);
  }
  return value;
}

export function requireInteger(value: unknown, name: string, min: number): number {
  if (typeof value !== 'number' || !Number.isInteger(value) || value < min) {
    throw new StatsInputError(`${name} must be an integer >= ${min} (got ${String(value)})`);
  }
  return value;
}

export function requireNonNegative(value: unknown, name: string): number {
  if (typeof value !== 'number' || !Number.isFinite(value) || value < 0) {
    throw new StatsInputError(`${name} must be a finite number >= 0 (got ${String(value)})`);
  }
  return value;
}

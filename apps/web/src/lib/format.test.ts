import { describe, expect, it } from 'vitest';
import { formatAlpha, formatInterval, formatNumber, formatP, formatPercent, formatPStatement, formatSigned } from '@/lib/format';

describe('formatP', () => {
  it('shows p below .001 as "< .001" and drops the leading zero otherwise', () => {
    expect(formatP(0.0002)).toBe('< .001');
    expect(formatP(0.0019714)).toBe('.002');
    expect(formatP(0.05)).toBe('.050');
    expect(formatP(0.9996)).toBe('> .999');
    expect(formatPStatement(0.0002)).toBe('p < .001');
    expect(formatPStatement(0.2467)).toBe('p = .247');
  });
});

describe('formatNumber', () => {
  it('rounds to the given decimals with a true minus sign, and never shows "−0.00"', () => {
    expect(formatNumber(3.112098, 2)).toBe('3.11');
    expect(formatNumber(-0.3155, 3)).toBe('\u22120.316');
    expect(formatNumber(-0.0001, 2)).toBe('0.00');
    expect(formatNumber(12345.678, 1)).toBe('12,345.7');
    expect(formatNumber(null)).toBe('—');
  });

  it('marks positive differences with a plus sign', () => {
    expect(formatSigned(9.987957, 2)).toBe('+9.99');
    expect(formatSigned(-1.5, 1)).toBe('\u22121.5');
    expect(formatSigned(0.001, 2)).toBe('0.00');
  });

  it('writes intervals, percentages and alpha as reports do', () => {
    expect(formatInterval([3.6813, 16.2946])).toBe('[3.68, 16.29]');
    expect(formatInterval([null, 2.5])).toBe('[\u2212∞, 2.50]');
    expect(formatPercent(15.0326)).toBe('15.0%');
    expect(formatAlpha(0.05)).toBe('.05');
    expect(formatAlpha(0.025)).toBe('.025');
  });
});

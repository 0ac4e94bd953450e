import { describe, expect, it } from 'vitest';
import { comparisonScheduleSchema, cronOfRhythm, rhythmOfCron, runResultsSchema } from './runs.js';

describe('runResultsSchema', () => {
  it('reads the open end of a one-sided interval, which JSON stores as null, for the t tests and the baseline adjustment', () => {
    const tTest = { t: 2.1, df: 40.2, p: 0.02, meanDifference: 3.5, se: 1.67, ci: [0.7, Infinity], confidence: 0.95, alternative: 'greater' };
    const stored = JSON.parse(JSON.stringify({ primary: tTest, ancova: { adjustedDifference: 3.1, se: 1.2, t: 2.6, df: 39, p: 0.007, ci: [1.1, Infinity], g: 0.3, n: 42 } }));
    expect(stored.primary.ci).toEqual([0.7, null]);
    const primary = runResultsSchema.shape.primary.parse({ ...stored.primary, test: 'welch', significant: true });
    expect(primary.ci).toEqual([0.7, null]);
    const ancova = runResultsSchema.shape.sensitivity.shape.ancova.parse(stored.ancova);
    expect(ancova?.ci).toEqual([1.1, null]);
  });

  it('still refuses an interval bound that is not a number', () => {
    const result = runResultsSchema.shape.effectSize.safeParse({ g: 0.2, ci: [0.1, null], se: 0.05, improvementIndex: 8, substantivelyImportant: false });
    expect(result.success).toBe(false);
  });
});

describe('monitoring rhythms', () => {
  it('when a plain choice is made, then it writes the cron expression the schedule runs on, and reads back as the same choice', () => {
    expect(cronOfRhythm({ kind: 'weekdays', hour: 2, minute: 0 })).toBe('0 2 * * 1-5');
    expect(cronOfRhythm({ kind: 'mondays', hour: 7, minute: 30 })).toBe('30 7 * * 1');
    expect(rhythmOfCron('0 2 * * 1-5')).toEqual({ kind: 'weekdays', hour: 2, minute: 0 });
    expect(rhythmOfCron('30  7 * * 1')).toEqual({ kind: 'mondays', hour: 7, minute: 30 });
    expect(comparisonScheduleSchema.parse({ scheduleCron: cronOfRhythm({ kind: 'mondays', hour: 7, minute: 30 }) }).scheduleCron).toBe('30 7 * * 1');
  });

  it('when a cron is not one of the plain choices, then it is custom and kept as typed', () => {
    expect(rhythmOfCron('0 2 * * *')).toEqual({ kind: 'custom', cron: '0 2 * * *' });
    expect(rhythmOfCron('0 25 * * 1')).toEqual({ kind: 'custom', cron: '0 25 * * 1' });
    expect(cronOfRhythm({ kind: 'custom', cron: ' 15 6 1 * * ' })).toBe('15 6 1 * *');
  });
});

export { StatsInputError } from './errors.js';
export type { Alternative, Sample } from './input.js';
export * from './distributions.js';
export { summarize, mergeSummaries, mergeAllSummaries, summaryVariance, summaryFromGroup } from './summary.js';
export type { Summary, GroupSummary } from './summary.js';
export { median } from './select.js';
export * from './ttest.js';
export * from './variance.js';
export * from './effect-size.js';

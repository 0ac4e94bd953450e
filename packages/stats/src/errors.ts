/** Thrown for input a statistic cannot be computed from; the message says what is wrong and where. */
export class StatsInputError extends Error {
  override name = 'StatsInputError';
}

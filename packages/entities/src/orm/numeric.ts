import type { ValueTransformer } from 'typeorm';

/** PostgreSQL returns numeric as a string to keep precision; scores fit a double exactly enough. */
export const numericToNumber: ValueTransformer = {
  to: (value: number | null | undefined) => value,
  from: (value: string | null) => (value === null ? null : Number(value)),
};

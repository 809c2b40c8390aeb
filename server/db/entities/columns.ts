import { ValueTransformer } from 'typeorm';

/** bigint comes back from pg as a string; sequence numbers stay well inside 2^53. */
export const bigintNumber: ValueTransformer = {
  to: (v: number | null | undefined) => v,
  from: (v: string | null) => (v === null || v === undefined ? v : Number(v)),
};

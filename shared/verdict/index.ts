/** Lot verdicts: the evidence they are judged on and the judgement. */
export * from './evidence';
export * from './judge';

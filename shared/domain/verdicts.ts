/** Lot verdict states and their words — declared once, without zod (screens import them cheaply). */

export const LOT_VERDICTS = ['passed', 'drifting', 'failed', 'incomplete', 'insufficient-sample', 'in-progress', 'untested'] as const;
export type LotVerdict = (typeof LOT_VERDICTS)[number];
export const LOT_VERDICT_LABEL: Record<LotVerdict, string> = {
  passed: 'Passed',
  drifting: 'Drifting',
  failed: 'Failed',
  incomplete: 'Incomplete',
  'insufficient-sample': 'Insufficient sample',
  'in-progress': 'In progress',
  untested: 'Not tested',
};

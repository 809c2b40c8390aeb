/** Qualification words and lists the screens show — without the templates' data (shared/qualification/templates.ts). */

export type SourceBasis = 'published' | 'memory';

export const QUAL_TEMPLATE_KEYS = ['aec-q101', 'jesd47', 'mil-prf-19500'] as const;
export type QualTemplateKey = (typeof QUAL_TEMPLATE_KEYS)[number];

/** What the engineer reads beside anything recalled rather than checked against the text. */
export const CONFIRM_WORDS = "Recalled, not checked against the text: confirm against the standard's current revision.";

export const basisWords = (basis: SourceBasis): string => (basis === 'memory' ? CONFIRM_WORDS : 'Checked against the published text.');

export const CELL_STATES = ['not-started', 'booked', 'under-stress', 'awaiting-verdict', 'passed', 'failed', 'waived'] as const;
export type CellState = (typeof CELL_STATES)[number];

export const CELL_STATE_LABEL: Record<CellState, string> = {
  'not-started': 'Not started',
  booked: 'Booked',
  'under-stress': 'Under stress',
  'awaiting-verdict': 'Awaiting verdict',
  passed: 'Passed',
  failed: 'Failed',
  waived: 'Waived',
};

export type QualificationStatus = 'in-progress' | 'complete' | 'failed';
export const QUAL_STATUS_LABEL: Record<QualificationStatus, string> = {
  'in-progress': 'In progress',
  complete: 'Complete',
  failed: 'Failed',
};

/** Least words for a family's generic-data rule (qualifying several device types on shared data). */
export const FAMILY_RULE_MIN = 20;
export const WAIVER_REASON_MIN = 10;

/** What a withdrawal takes back from a cell, in words (screen, report, CSV). */
export const WITHDRAWN_RECORD_LABEL = { waiver: 'waiver', external: 'outside result' } as const;

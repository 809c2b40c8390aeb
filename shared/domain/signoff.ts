/**
 * Words and sets of the safety approvals and verdict signatures that screens need without zod
 * (route files must not reach zod statically: tests/unit/lazy-kits.test.ts). The request schemas in
 * shared/schemas/approvals.ts and signoff.ts re-export them.
 */
import type { LotVerdict } from './verdicts';

export const OVERRIDE_REQUEST_STATES = ['pending', 'approved', 'refused', 'used'] as const;
export type OverrideRequestState = (typeof OVERRIDE_REQUEST_STATES)[number];
export const OVERRIDE_REQUEST_STATE_LABEL: Record<OverrideRequestState, string> = {
  pending: 'Waiting for approval',
  approved: 'Approved',
  refused: 'Refused',
  used: 'Used by a booking',
};

/**
 * The meaning a signer states (21 CFR Part 11 §11.50(a)(3): a signed record shows the meaning of
 * the signature, such as review or approval).
 */
export const SIGNATURE_MEANINGS = ['reviewed', 'approved'] as const;
export type SignatureMeaning = (typeof SIGNATURE_MEANINGS)[number];
export const SIGNATURE_MEANING_LABEL: Record<SignatureMeaning, string> = {
  reviewed: 'Reviewed',
  approved: 'Approved for release',
};

/** Verdicts that are still moving (stress running, nothing tested) cannot be signed. */
export const UNSIGNABLE_VERDICTS: readonly LotVerdict[] = ['in-progress', 'untested'];

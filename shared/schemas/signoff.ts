import { z } from 'zod';
import type { LotVerdict } from './analytics';

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

export const signVerdictSchema = z.object({
  password: z.string({ error: 'Enter your password to sign' }).min(1, 'Enter your password to sign').max(200),
  meaning: z.enum(SIGNATURE_MEANINGS, 'State what your signature means: reviewed or approved'),
});
export type SignVerdictInput = z.infer<typeof signVerdictSchema>;

export const signoffLotParamsSchema = z.object({ lotId: z.string().uuid('Not a valid lot id') });

export interface VerdictSignature {
  id: string;
  lotId: string;
  verdict: LotVerdict;
  meaning: SignatureMeaning;
  signer: { id: string; name: string; email: string };
  signedAt: string;
  /** SHA-256 (hex) of the canonical JSON of the lot's judged evidence and verdict when signed. */
  dataHash: string;
  /** True when the same data hashes differently now: the verdict needs a new signature. */
  stale: boolean;
}

export interface LotSignoff {
  lotId: string;
  verdict: LotVerdict;
  /** The hash of the data as it stands now. */
  currentHash: string;
  signable: boolean;
  /** Newest first. */
  signatures: VerdictSignature[];
}

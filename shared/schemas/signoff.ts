import { z } from 'zod';
import type { LotVerdict } from '../domain/verdicts';

import { SIGNATURE_MEANINGS, type SignatureMeaning } from '../domain/signoff';

export { SIGNATURE_MEANINGS, SIGNATURE_MEANING_LABEL, UNSIGNABLE_VERDICTS, type SignatureMeaning } from '../domain/signoff';

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

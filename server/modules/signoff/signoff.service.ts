/**
 * Sign-off of a lot verdict (issue #21 item 4) as an electronic signature, following 21 CFR Part 11
 * (REFERENCE.md A10): §11.50 — the signature shows the signer's printed name, the date and time of
 * signing and its meaning (reviewed, approved); §11.70 — it is linked to the record it signs, here
 * by a SHA-256 hash of the canonical JSON of the lot's judged evidence and verdict; §11.200(a) —
 * the signer, signed in with e-mail and password, re-enters the password at every signing (no
 * shortened series). The hash is recomputed at read time: when the data under a signed verdict
 * changes, the signature shows as needing a new one.
 */
import type { DataSource } from 'typeorm';
import { canonicalJson } from '../../../shared/canonical-json';
import type { SessionUser } from '../../../shared/schemas/auth';
import { LOT_VERDICT_LABEL } from '../../../shared/schemas/analytics';
import { UNSIGNABLE_VERDICTS, type LotSignoff, type SignVerdictInput, type VerdictSignature } from '../../../shared/schemas/signoff';
import { VerdictSignatureEntity } from '../../db/entities';
import { forbidden, unprocessable } from '../../http/errors';
import type { AnalyticsService } from '../analytics/analytics.service';
import type { AuditService } from '../audit/audit.service';
import { LOCKOUT_AFTER, LOCKOUT_MINUTES, type AuthService } from '../auth/auth.service';
import { sha256Hex } from '../audit/audit-chain';

export const WRONG_SIGNING_PASSWORD = `Wrong password: nothing was signed. After ${LOCKOUT_AFTER} wrong passwords in a row the account is locked for ${LOCKOUT_MINUTES} minutes.`;

const toView = (s: VerdictSignatureEntity, currentHash: string): VerdictSignature => ({
  id: s.id,
  lotId: s.lotId,
  verdict: s.verdict,
  meaning: s.meaning,
  signer: { id: s.signerId, name: s.signerName, email: s.signerEmail },
  signedAt: s.signedAt.toISOString(),
  dataHash: s.dataHash,
  stale: s.dataHash !== currentHash,
});

export class SignoffService {
  constructor(
    private readonly ds: DataSource,
    private readonly audit: AuditService,
    private readonly auth: AuthService,
    private readonly analytics: AnalyticsService,
    private readonly now: () => Date,
  ) {}

  /** The data a signature covers, as canonical JSON, and its SHA-256. */
  async signedData(lotId: string) {
    const j = await this.analytics.judgedEvidence(lotId);
    const data = canonicalJson({ lotId, lotCode: j.lotCode, verdict: j.verdict, evidence: j.evidence });
    return { verdict: j.verdict, lotCode: j.lotCode, data, hash: sha256Hex(data) };
  }

  async forLot(lotId: string): Promise<LotSignoff> {
    const d = await this.signedData(lotId);
    const rows = await this.ds.getRepository(VerdictSignatureEntity).find({ where: { lotId }, order: { signedAt: 'DESC' } });
    return {
      lotId,
      verdict: d.verdict,
      currentHash: d.hash,
      signable: !UNSIGNABLE_VERDICTS.includes(d.verdict),
      signatures: rows.map((r) => toView(r, d.hash)),
    };
  }

  async sign(actor: SessionUser, lotId: string, input: SignVerdictInput): Promise<LotSignoff> {
    const d = await this.signedData(lotId);
    if (UNSIGNABLE_VERDICTS.includes(d.verdict)) {
      throw unprocessable(
        `Lot ${d.lotCode} is ${LOT_VERDICT_LABEL[d.verdict].toLowerCase()}: a verdict can be signed once the stress is over.`,
      );
    }
    const check = await this.auth.verify(actor.email, input.password);
    if (!check.ok || check.user.id !== actor.id) throw forbidden(WRONG_SIGNING_PASSWORD);
    const me = check.user;
    await this.ds.transaction(async (m) => {
      const saved = await m.save(
        m.create(VerdictSignatureEntity, {
          lotId,
          verdict: d.verdict,
          meaning: input.meaning,
          signerId: me.id,
          signerName: me.name,
          signerEmail: me.email,
          signedAt: this.now(),
          dataHash: d.hash,
          data: d.data,
        }),
      );
      await this.audit.record(
        {
          actor,
          action: 'verdict.sign',
          entity: 'lot',
          entityId: lotId,
          details: { signatureId: saved.id, lotCode: d.lotCode, verdict: d.verdict, meaning: input.meaning, dataHash: d.hash },
        },
        m,
      );
    });
    return this.forLot(lotId);
  }
}

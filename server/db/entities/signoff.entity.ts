import { Column, CreateDateColumn, Entity, Index, PrimaryGeneratedColumn } from 'typeorm';
import type { OverriddenFinding, OverrideRequestState } from '../../../shared/schemas/approvals';
import type { SignatureMeaning } from '../../../shared/schemas/signoff';
import type { LotVerdict } from '../../../shared/schemas/analytics';

/**
 * A request to book a plan version despite its blocking findings: asked by one engineer, decided
 * by a second person holding the safety-approval grant, used by at most one booking.
 */
@Entity('override_requests')
@Index('IDX_override_requests_plan_state', ['planId', 'state'])
export class OverrideRequestEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) planId: string;
  @Column({ type: 'varchar', length: 12 }) state: OverrideRequestState;
  /** The blocking findings with their numbers, frozen when asked. */
  @Column({ type: 'jsonb' }) findings: OverriddenFinding[];
  @Column({ type: 'text' }) reason: string;
  @Column({ type: 'uuid' }) requestedById: string;
  @Column({ type: 'timestamptz' }) requestedAt: Date;
  @Column({ type: 'uuid', nullable: true }) decidedById: string | null;
  @Column({ type: 'timestamptz', nullable: true }) decidedAt: Date | null;
  @Column({ type: 'text', nullable: true }) note: string | null;
  @Column({ type: 'uuid', nullable: true }) usedBySampleId: string | null;
}

/** An electronic signature of a lot verdict (21 CFR Part 11 §11.50): who, when, meaning, and the hash of what was signed. */
@Entity('verdict_signatures')
@Index('IDX_verdict_signatures_lot', ['lotId'])
export class VerdictSignatureEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) lotId: string;
  @Column({ type: 'varchar', length: 24 }) verdict: LotVerdict;
  @Column({ type: 'varchar', length: 12 }) meaning: SignatureMeaning;
  @Column({ type: 'uuid' }) signerId: string;
  /** Printed name and e-mail as they were at signing (§11.50(a)(1)). */
  @Column({ type: 'varchar', length: 120 }) signerName: string;
  @Column({ type: 'varchar', length: 254 }) signerEmail: string;
  @Column({ type: 'timestamptz' }) signedAt: Date;
  @Column({ type: 'char', length: 64 }) dataHash: string;
  /** The canonical JSON that was hashed, kept so a reviewer can see what was signed. */
  @Column({ type: 'text' }) data: string;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

import { Column, CreateDateColumn, Entity, Index, PrimaryGeneratedColumn } from 'typeorm';
import type { DelayBasis, ReplanKind, ReplanState } from '../../../shared/schemas/replan';

/**
 * A proposed new place for a booked run whose rig went offline or into maintenance
 * (server/modules/replan). Accepting one moves the booking; the run's row version at proposal
 * time tells a stale proposal from a current one.
 */
@Entity('replan_proposals')
@Index('IDX_replan_proposals_run_state', ['runId', 'state'])
export class ReplanProposalEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) runId: string;
  @Column({ type: 'varchar', length: 12 }) kind: ReplanKind;
  @Column({ type: 'varchar', length: 12 }) state: ReplanState;
  @Column({ type: 'text' }) reason: string;
  @Column({ type: 'uuid' }) fromRigId: string;
  @Column({ type: 'uuid' }) toRigId: string;
  @Column({ type: 'timestamptz', nullable: true }) fromStart: Date | null;
  @Column({ type: 'timestamptz', nullable: true }) fromEnd: Date | null;
  @Column({ type: 'timestamptz' }) startAt: Date;
  @Column({ type: 'timestamptz' }) endAt: Date;
  @Column({ type: 'timestamptz', nullable: true }) dueAt: Date | null;
  @Column({ type: 'varchar', length: 16 }) delayBasis: DelayBasis;
  @Column({ type: 'double precision' }) delayH: number;
  /** runs.row_version when proposed. */
  @Column({ type: 'int' }) runRowVersion: number;
  @Column({ type: 'uuid', nullable: true }) decidedById: string | null;
  @Column({ type: 'timestamptz', nullable: true }) decidedAt: Date | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

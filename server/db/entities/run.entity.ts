import {
  Column,
  CreateDateColumn,
  Entity,
  Index,
  JoinColumn,
  ManyToOne,
  PrimaryColumn,
  PrimaryGeneratedColumn,
  UpdateDateColumn,
  VersionColumn,
} from 'typeorm';
import type { StressSegment } from '../../../shared/reliability';
import { bigintNumber } from './columns';
import { DeviceEntity, LotEntity } from './lot.entity';
import { RigEntity } from './rig.entity';
import { StressPlanEntity } from './stress-plan.entity';

import type { RunState } from '../../../shared/domain/run-states';
import type { HoldPhase } from '../../../shared/holds/sequence';
import type { TcCounterState } from '../../../shared/chamber/profile';

/** Run lifecycle states: declared in shared/domain/run-states.ts. */
export type { RunState };

/**
 * One sample judged as a whole: a run, or runs on several rigs booked together (the plan asks for
 * more devices than the largest rig holds). Every run belongs to one sample (runs.sample_id).
 * A sample booked smaller than its plan carries a deviation: reason, person, time (also audited).
 */
@Entity('samples')
export class SampleEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Index() @Column({ type: 'uuid' }) planId: string;
  @ManyToOne(() => StressPlanEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'plan_id' })
  plan?: StressPlanEntity;
  /** The plan's sample size when booked. */
  @Column({ type: 'int' }) plannedSize: number;
  /** Devices booked over all of the sample's runs. */
  @Column({ type: 'int' }) bookedSize: number;
  @Column({ type: 'text', nullable: true }) deviationReason: string | null;
  @Column({ type: 'uuid', nullable: true }) deviationById: string | null;
  @Column({ type: 'timestamptz', nullable: true }) deviationAt: Date | null;
  @Column({ type: 'uuid', nullable: true }) createdById: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

@Entity('runs')
export class RunEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'varchar', length: 32, unique: true }) code: string;
  @Index() @Column({ type: 'uuid' }) planId: string;
  @ManyToOne(() => StressPlanEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'plan_id' })
  plan?: StressPlanEntity;
  @Index() @Column({ type: 'uuid', nullable: true }) rigId: string | null;
  @ManyToOne(() => RigEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'rig_id' })
  rig?: RigEntity;
  @Index() @Column({ type: 'varchar', length: 16 }) state: RunState;
  @Column({ type: 'int' }) sampleSize: number;
  /** The sample this run belongs to (several runs on several rigs may share one; evidence.entity.ts). */
  @Index() @Column({ type: 'uuid', nullable: true }) sampleId: string | null;
  @ManyToOne(() => SampleEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'sample_id' })
  sample?: SampleEntity;
  @Column({ type: 'timestamptz', nullable: true }) scheduledStart: Date | null;
  @Column({ type: 'timestamptz', nullable: true }) scheduledEnd: Date | null;
  @Column({ type: 'timestamptz', nullable: true }) startedAt: Date | null;
  @Column({ type: 'timestamptz', nullable: true }) finishedAt: Date | null;
  @Column({ type: 'timestamptz' }) stateChangedAt: Date;
  /** Stress hours accrued by the run while conditions held (MIL-STD-750 general requirements). */
  @Column({ type: 'double precision', default: 0 }) stressHours: number;
  /** Power cycling: the run's credited cycles (its read points and end count these; shared/scheduling/cycling.ts). */
  @Column({ type: 'int', default: 0 }) cyclesDone: number;
  /** Temperature cycling in a chamber: the cycle counter's state from the load temperature (shared/chamber/profile.ts); null otherwise. */
  @Column({ type: 'jsonb', nullable: true }) chamberCounter: TcCounterState | null;
  /** Index into the plan's read points of the next read point to reach. */
  @Column({ type: 'int', default: 0 }) nextReadPoint: number;
  /** Telemetry sequence number up to which hours have been accrued (restart-exact accounting). */
  @Column({ type: 'bigint', default: 0, transformer: bigintNumber }) accruedToSeq: number;
  /** Rig stress-clock seconds of the last accrual step. */
  @Column({ type: 'double precision', nullable: true }) accruedToClockS: number | null;
  @Column({ type: 'timestamptz', nullable: true }) heatingSince: Date | null;
  @Column({ type: 'timestamptz', nullable: true }) ambientReachedAt: Date | null;
  @Column({ type: 'timestamptz', nullable: true }) biasRemovedAt: Date | null;
  /** Where a read-point hold or the end of stress stands (shared/holds HOLD_PHASES); null outside them. */
  @Column({ type: 'varchar', length: 24, nullable: true }) holdPhase: HoldPhase | null;
  @Column({ type: 'timestamptz', nullable: true }) holdPhaseSince: Date | null;
  @Column({ type: 'text', nullable: true }) abortReason: string | null;
  /** Why the run went into the fault state (the rig's refusal in words) and when; kept after a retry. */
  @Column({ type: 'text', nullable: true }) faultReason: string | null;
  @Column({ type: 'timestamptz', nullable: true }) faultAt: Date | null;
  /** Engineer's written reason for booking despite a blocking plan-check finding. */
  @Column({ type: 'text', nullable: true }) overrideReason: string | null;
  @Column({ type: 'uuid', nullable: true }) overrideById: string | null;
  @Column({ type: 'uuid', nullable: true }) createdById: string | null;
  /** When the requester needs the run finished (null: no date, never late); shared/scheduling/tardiness.ts. */
  @Column({ type: 'timestamptz', nullable: true }) dueAt: Date | null;
  /** 1 low … 4 urgent; its weight in the weighted tardiness is shared/domain/priority.ts. */
  @Column({ type: 'smallint', default: 2 }) priority: number;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
  @UpdateDateColumn({ type: 'timestamptz' }) updatedAt: Date;
  @VersionColumn() rowVersion: number;
}

@Entity('run_lots')
export class RunLotEntity {
  @PrimaryColumn({ type: 'uuid' }) runId: string;
  @PrimaryColumn({ type: 'uuid' }) lotId: string;
  @ManyToOne(() => RunEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'run_id' })
  run?: RunEntity;
  @ManyToOne(() => LotEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'lot_id' })
  lot?: LotEntity;
}

/** The socket map: which device sits in which socket of the run's rig, and its own hours. */
@Entity('run_sockets')
@Index(['runId', 'socketIndex'], { unique: true })
@Index(['runId', 'deviceId'], { unique: true })
export class RunSocketEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) runId: string;
  @ManyToOne(() => RunEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'run_id' })
  run?: RunEntity;
  @Column({ type: 'int' }) socketIndex: number;
  @Column({ type: 'uuid' }) deviceId: string;
  @ManyToOne(() => DeviceEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'device_id' })
  device?: DeviceEntity;
  @Column({ type: 'double precision', default: 0 }) accruedHours: number;
  @Column({ type: 'boolean', default: false }) tripped: boolean;
  @Column({ type: 'timestamptz', nullable: true }) trippedAt: Date | null;
  @Column({ type: 'text', nullable: true }) tripReason: string | null;
  /** Read point (hours) at which this device first failed its criteria; null while passing. */
  @Column({ type: 'double precision', nullable: true }) failedAtH: number | null;
  /** Power cycling: cycles credited (swing within the plan's band), and cycles completed but not credited. */
  @Column({ type: 'int', default: 0 }) cyclesDone: number;
  @Column({ type: 'int', default: 0 }) cyclesMissed: number;
  /** The smallest / largest junction swing (K) the rig last reported for this socket. */
  @Column({ type: 'real', nullable: true }) lastDTjLowC: number | null;
  @Column({ type: 'real', nullable: true }) lastDTjHighC: number | null;
  /**
   * The credited hours by estimated junction temperature (and chamber humidity), from the socket's
   * telemetry (shared/reliability addStressSegment); null for hours accrued before it was recorded.
   */
  @Column({ type: 'jsonb', nullable: true }) stressSegments: StressSegment[] | null;
}

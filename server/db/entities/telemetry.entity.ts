import { Column, Entity, Index, PrimaryColumn, PrimaryGeneratedColumn } from 'typeorm';
import { bigintNumber } from './columns';

/**
 * One telemetry message of a rig (one instant). (rig_id, seq) is the de-duplication key:
 * a replayed message inserts nothing twice.
 */
@Entity('telemetry_batches')
@Index(['rigId', 'ts'])
@Index('IDX_telemetry_batches_stored_at', ['storedAt'])
export class TelemetryBatchEntity {
  @PrimaryColumn({ type: 'uuid' }) rigId: string;
  @PrimaryColumn({ type: 'bigint', transformer: bigintNumber }) seq: number;
  /** The rig's own timestamp. */
  @Column({ type: 'timestamptz' }) ts: Date;
  /** The rig's stress clock (seconds); accelerated in demo mode. */
  @Column({ type: 'double precision' }) stressClockS: number;
  @Column({ type: 'real' }) chamberC: number;
  @Column({ type: 'real', nullable: true }) humidityPct: number | null;
  @Column({ type: 'real' }) setpointC: number;
  /** Start of the ingest transaction that stored it; rollup recovery finds recent batches by it. */
  @Column({ type: 'timestamptz', default: () => 'now()' }) storedAt: Date;
}

/** One socket's reading within a batch. Bulk-loaded with COPY. */
@Entity('telemetry_samples')
export class TelemetrySampleEntity {
  @PrimaryColumn({ type: 'uuid' }) rigId: string;
  @PrimaryColumn({ type: 'bigint', transformer: bigintNumber }) seq: number;
  @PrimaryColumn({ type: 'smallint' }) socket: number;
  @Column({ type: 'real' }) caseC: number;
  @Column({ type: 'real' }) vV: number;
  @Column({ type: 'double precision' }) iA: number;
  @Column({ type: 'boolean' }) biasOn: boolean;
  @Column({ type: 'boolean', default: false }) tripped: boolean;
}

/** Per-minute rollup per socket (socket −1 = the chamber) for charts over long spans. */
@Entity('telemetry_rollups')
export class TelemetryRollupEntity {
  @PrimaryColumn({ type: 'uuid' }) rigId: string;
  @PrimaryColumn({ type: 'smallint' }) socket: number;
  @PrimaryColumn({ type: 'timestamptz' }) minute: Date;
  @Column({ type: 'int' }) n: number;
  @Column({ type: 'double precision' }) sumC: number;
  @Column({ type: 'real' }) minC: number;
  @Column({ type: 'real' }) maxC: number;
  @Column({ type: 'double precision' }) sumIA: number;
  @Column({ type: 'double precision', nullable: true }) stressClockS: number | null;
}

/** MQTT messages refused by ingest, with the reason (visible to admins). */
@Entity('rejected_messages')
@Index('IDX_rejected_messages_at', ['at'])
export class RejectedMessageEntity {
  @PrimaryGeneratedColumn('increment', { type: 'bigint' }) id: string;
  @Column({ type: 'timestamptz', default: () => 'now()' }) at: Date;
  @Column({ type: 'varchar', length: 200 }) topic: string;
  @Column({ type: 'varchar', length: 32, nullable: true }) rigCode: string | null;
  @Column({ type: 'text' }) reason: string;
  @Column({ type: 'text' }) excerpt: string;
}

/** Durable counters (ingest dropped, rejected, …): a value once non-zero stays visible. */
@Entity('system_counters')
export class SystemCounterEntity {
  @PrimaryColumn({ type: 'varchar', length: 64 }) name: string;
  @Column({ type: 'bigint', default: 0, transformer: bigintNumber }) value: number;
  @Column({ type: 'timestamptz', default: () => 'now()' }) updatedAt: Date;
}

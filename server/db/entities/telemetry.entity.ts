import { Column, Entity, Index, PrimaryColumn, PrimaryGeneratedColumn } from 'typeorm';
import { bigintNumber } from './columns';

/**
 * One telemetry message of a rig (one instant) with its sockets as arrays (one element per socket,
 * in the message's order; flags: bit 1 bias on, bit 2 tripped). Range-partitioned by `ts`, one
 * partition per UTC day (migration 1828…, server/modules/telemetry/upkeep.ts); a partitioned
 * table's key must hold `ts`, so the ingest itself refuses a second (rig_id, seq). The view
 * `telemetry_samples` gives one row per socket (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped, ts).
 */
@Entity('telemetry_batches')
@Index('IDX_telemetry_batches_rig_ts', ['rigId', 'ts'])
@Index('IDX_telemetry_batches_stored_at', ['storedAt'])
export class TelemetryBatchEntity {
  @PrimaryColumn({ type: 'uuid' }) rigId: string;
  @PrimaryColumn({ type: 'bigint', transformer: bigintNumber }) seq: number;
  /** The rig's own timestamp (the partition key). */
  @PrimaryColumn({ type: 'timestamptz' }) ts: Date;
  /** The rig's stress clock (seconds); accelerated in demo mode. */
  @Column({ type: 'double precision' }) stressClockS: number;
  /** Start of the ingest transaction that stored it; rollup recovery finds recent batches by it. */
  @Column({ type: 'timestamptz', default: () => 'now()' }) storedAt: Date;
  @Column({ type: 'real' }) chamberC: number;
  @Column({ type: 'real' }) setpointC: number;
  @Column({ type: 'real', nullable: true }) humidityPct: number | null;
  @Column({ type: 'smallint', array: true, default: () => "'{}'" }) socket: number[];
  @Column({ type: 'real', array: true, default: () => "'{}'" }) caseC: number[];
  @Column({ type: 'real', array: true, default: () => "'{}'" }) vV: number[];
  @Column({ type: 'double precision', array: true, default: () => "'{}'" }) iA: number[];
  @Column({ type: 'smallint', array: true, default: () => "'{}'" }) flags: number[];
}

/** Per-minute rollup per socket (socket −1 = the chamber) for charts over long spans; partitioned by day of `minute`. */
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

/** Hourly rollup per socket (socket −1 = the chamber), kept for good; rebuilt from the minute rollups (upkeep.ts). */
@Entity('telemetry_hourly')
export class TelemetryHourlyEntity {
  @PrimaryColumn({ type: 'uuid' }) rigId: string;
  @PrimaryColumn({ type: 'smallint' }) socket: number;
  @PrimaryColumn({ type: 'timestamptz' }) hour: Date;
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

import { Column, CreateDateColumn, Entity, Index, JoinColumn, ManyToOne, PrimaryGeneratedColumn } from 'typeorm';
import { bigintNumber } from './columns';
import type { RigKind } from '../../../shared/domain/rig-kinds';

/**
 * An oven with a burn-in board (kind 'board': one chamber temperature at a time, socketCount
 * sockets), or a chamber for unbiased stresses (kind 'chamber': temperature cycling, storage,
 * autoclave) whose socketCount is its capacity in devices — the load positions of its trays, not
 * sockets with bias (shared/domain/rig-kinds.ts).
 */
@Entity('rigs')
export class RigEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  /** Short code used in MQTT topics and on the floor, e.g. "OV-03". */
  @Column({ type: 'varchar', length: 32, unique: true }) code: string;
  @Column({ type: 'varchar', length: 80 }) name: string;
  @Column({ type: 'varchar', length: 80, default: '' }) location: string;
  @Column({ type: 'int' }) socketCount: number;
  @Column({ type: 'double precision' }) maxTempC: number;
  /** 'board' (socketed burn-in oven) or 'chamber' (unbiased: devices loaded by count). */
  @Column({ type: 'varchar', length: 12, default: 'board' }) kind: RigKind;
  /** Coldest set point the chamber holds (°C); null = no cooling (room ambient is its floor). */
  @Column({ type: 'double precision', nullable: true }) minTempC: number | null;
  /** Highest absolute vessel pressure (kPa) for autoclave / HAST; null = not a pressure vessel. */
  @Column({ type: 'double precision', nullable: true }) maxPressureKPa: number | null;
  @Column({ type: 'double precision' }) maxVoltageV: number;
  @Column({ type: 'boolean', default: false }) humidityCapable: boolean;
  @Column({ type: 'double precision', nullable: true }) maxHumidityPct: number | null;
  /** False once decommissioned: never booked again, history kept. */
  @Column({ type: 'boolean', default: true }) active: boolean;
  @Column({ type: 'varchar', length: 64, unique: true }) mqttUsername: string;
  /** bcryptjs hash of the rig's MQTT secret; the secret itself is shown once when issued. */
  @Column({ type: 'varchar', length: 100 }) mqttSecretHash: string;
  @Column({ type: 'timestamptz' }) credentialsIssuedAt: Date;
  @Column({ type: 'timestamptz', nullable: true }) credentialsRevokedAt: Date | null;
  @Column({ type: 'boolean', default: false }) online: boolean;
  @Column({ type: 'timestamptz', nullable: true }) lastSeenAt: Date | null;
  /** Highest telemetry sequence number committed for this rig. */
  @Column({ type: 'bigint', default: 0, transformer: bigintNumber }) lastSeq: number;
  @Column({ type: 'double precision', nullable: true }) chamberC: number | null;
  @Column({ type: 'double precision', nullable: true }) setpointC: number | null;
  @Column({ type: 'double precision', nullable: true }) humidityPct: number | null;
  /** The date the rig's measuring chain (thermocouples, bias supplies) is next due for calibration; null = never recorded. */
  @Column({ type: 'timestamptz', nullable: true }) calibrationDueAt: Date | null;
  /** When the hardware interlocks (door, over-temperature, HV) were last tested; null = never recorded. */
  @Column({ type: 'timestamptz', nullable: true }) interlockTestedAt: Date | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

/** The maintenance record behind a rig's calibration-due and interlock-test dates: one row per entry. */
@Entity('rig_service_records')
export class RigServiceRecordEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Index() @Column({ type: 'uuid' }) rigId: string;
  @ManyToOne(() => RigEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'rig_id' })
  rig?: RigEntity;
  /** 'calibration' or 'interlock-test'. */
  @Column({ type: 'varchar', length: 20 }) kind: string;
  /** When the work was done. */
  @Column({ type: 'timestamptz' }) doneAt: Date;
  /** Calibration: when it is next due. Interlock test: null (valid for INTERLOCK_TEST_VALID_DAYS). */
  @Column({ type: 'timestamptz', nullable: true }) dueAt: Date | null;
  @Column({ type: 'varchar', length: 200, default: '' }) note: string;
  @Column({ type: 'uuid', nullable: true }) createdById: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

@Entity('rig_maintenance')
export class RigMaintenanceEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Index() @Column({ type: 'uuid' }) rigId: string;
  @ManyToOne(() => RigEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'rig_id' })
  rig?: RigEntity;
  @Column({ type: 'timestamptz' }) startsAt: Date;
  @Column({ type: 'timestamptz' }) endsAt: Date;
  @Column({ type: 'varchar', length: 200, default: '' }) reason: string;
  @Column({ type: 'uuid', nullable: true }) createdById: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

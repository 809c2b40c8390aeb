import { Column, CreateDateColumn, Entity, Index, JoinColumn, ManyToOne, PrimaryColumn, PrimaryGeneratedColumn } from 'typeorm';
import type { MeasurementResult } from '../../../shared/evidence';
import { DeviceEntity } from './lot.entity';
import { RunEntity } from './run.entity';
import type { RowResult } from '../../../shared/schemas/measurements';

/** One device's parametric reading at one read point of a run (read point 0 = time zero). */
@Entity('measurements')
@Index(['runId', 'deviceId', 'readPointH'], { unique: true })
export class MeasurementEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) runId: string;
  @ManyToOne(() => RunEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'run_id' })
  run?: RunEntity;
  @Index() @Column({ type: 'uuid' }) deviceId: string;
  @ManyToOne(() => DeviceEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'device_id' })
  device?: DeviceEntity;
  @Column({ type: 'double precision' }) readPointH: number;
  @Column({ type: 'double precision', nullable: true }) hfe: number | null;
  @Column({ type: 'double precision', nullable: true }) hfeIcA: number | null;
  @Column({ type: 'double precision', nullable: true }) hfeVceV: number | null;
  @Column({ type: 'double precision', nullable: true }) icboA: number | null;
  @Column({ type: 'double precision', nullable: true }) icboVcbV: number | null;
  @Column({ type: 'double precision', nullable: true }) vcesatV: number | null;
  @Column({ type: 'double precision', nullable: true }) bvceoV: number | null;
  @Column({ type: 'double precision', default: 25 }) measuredC: number;
  /** measured, or a catastrophic result (open, short, no-reading) whose values are null. */
  @Column({ type: 'varchar', length: 12, default: 'measured' }) result: MeasurementResult;
  /** Why the measuring temperature or test conditions differ from time zero; null = not flagged. */
  @Column({ type: 'text', nullable: true }) conditionsFlag: string | null;
  @Column({ type: 'uuid', nullable: true }) confirmedById: string | null;
  @Column({ type: 'timestamptz', nullable: true }) confirmedAt: Date | null;
  @Column({ type: 'text', nullable: true }) confirmReason: string | null;
  @Column({ type: 'timestamptz' }) measuredAt: Date;
  /** Measured more than 96 h after bias removal (JESD22-A108 window). */
  @Column({ type: 'boolean', default: false }) late: boolean;
  @Column({ type: 'uuid', nullable: true }) uploadId: string | null;
  @Column({ type: 'uuid', nullable: true }) enteredById: string | null;
  /**
   * The current version (1 = first entry). A trigger raises it whenever a value changes and copies
   * every version into measurement_versions (append-only), so this row is always the latest.
   */
  @Column({ type: 'int', default: 1 }) version: number;
  /** Why the current version replaced the one before (null for a first entry). */
  @Column({ type: 'text', nullable: true }) changeReason: string | null;
  /** The deviation kinds this version recorded on the lot, comma-separated; null when none. */
  @Column({ type: 'text', nullable: true }) deviation: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

/**
 * Every version of every reading, written by the trigger on measurements (never by hand) and never
 * updated or deleted (another trigger refuses both, except the cascade of a deleted run).
 */
@Entity('measurement_versions')
@Index(['measurementId', 'version'], { unique: true })
@Index(['runId', 'deviceId'])
export class MeasurementVersionEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) measurementId: string;
  @ManyToOne(() => MeasurementEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'measurement_id' })
  measurement?: MeasurementEntity;
  @Column({ type: 'uuid' }) runId: string;
  @Column({ type: 'uuid' }) deviceId: string;
  @Column({ type: 'double precision' }) readPointH: number;
  @Column({ type: 'int' }) version: number;
  @Column({ type: 'varchar', length: 12 }) result: MeasurementResult;
  @Column({ type: 'double precision', nullable: true }) hfe: number | null;
  @Column({ type: 'double precision', nullable: true }) hfeIcA: number | null;
  @Column({ type: 'double precision', nullable: true }) hfeVceV: number | null;
  @Column({ type: 'double precision', nullable: true }) icboA: number | null;
  @Column({ type: 'double precision', nullable: true }) icboVcbV: number | null;
  @Column({ type: 'double precision', nullable: true }) vcesatV: number | null;
  @Column({ type: 'double precision', nullable: true }) bvceoV: number | null;
  @Column({ type: 'double precision' }) measuredC: number;
  @Column({ type: 'timestamptz' }) measuredAt: Date;
  @Column({ type: 'boolean' }) late: boolean;
  @Column({ type: 'uuid', nullable: true }) uploadId: string | null;
  @Column({ type: 'uuid', nullable: true }) enteredById: string | null;
  @Column({ type: 'text', nullable: true }) reason: string | null;
  @Column({ type: 'text', nullable: true }) deviation: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) recordedAt: Date;
}

/**
 * The bytes of every stored upload, keyed by their SHA-256 (content-addressed, so the same file is
 * kept once however often it is sent). In PostgreSQL rather than a folder: the file and its upload
 * row commit in one transaction, and a database backup carries them together.
 */
@Entity('measurement_files')
export class MeasurementFileEntity {
  @PrimaryColumn({ type: 'char', length: 64 }) sha256: string;
  @Column({ type: 'bytea' }) content: Buffer;
  @Column({ type: 'int' }) sizeBytes: number;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

/** A CSV file uploaded for a read point; the same file twice is recognised by its hash. */
@Entity('measurement_uploads')
@Index(['runId', 'fileSha256'], { unique: true })
export class MeasurementUploadEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) runId: string;
  @Column({ type: 'double precision' }) readPointH: number;
  @Column({ type: 'char', length: 64 }) fileSha256: string;
  @Column({ type: 'varchar', length: 200 }) fileName: string;
  @Column({ type: 'int' }) rowsTotal: number;
  @Column({ type: 'int' }) rowsStored: number;
  @Column({ type: 'int' }) rowsRejected: number;
  @Column({ type: 'jsonb', default: () => "'[]'" }) rowErrors: RowResult[];
  @Column({ type: 'uuid', nullable: true }) uploadedById: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

import { Column, CreateDateColumn, Entity, Index, JoinColumn, ManyToOne, PrimaryGeneratedColumn } from 'typeorm';
import type { DispositionKind } from '../../../shared/evidence';
import { DeviceEntity } from './lot.entity';
import { RunEntity } from './run.entity';

/**
 * What happened to a device that has no (or no further) reading: lost, damaged in handling,
 * excluded, or — after a trip — counted as a failure or re-seated. One per device per run; it
 * applies from its read point on.
 */
@Entity('device_dispositions')
@Index(['runId', 'deviceId'], { unique: true })
export class DeviceDispositionEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) runId: string;
  @ManyToOne(() => RunEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'run_id' })
  run?: RunEntity;
  @Index() @Column({ type: 'uuid' }) deviceId: string;
  @ManyToOne(() => DeviceEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'device_id' })
  device?: DeviceEntity;
  /** First read point (hours) the disposition covers. */
  @Column({ type: 'double precision' }) readPointH: number;
  @Column({ type: 'varchar', length: 16 }) kind: DispositionKind;
  @Column({ type: 'text' }) reason: string;
  @Column({ type: 'uuid', nullable: true }) byId: string | null;
  @Column({ type: 'varchar', length: 120 }) byName: string;
  @Column({ type: 'timestamptz' }) at: Date;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

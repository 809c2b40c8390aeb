import { Column, CreateDateColumn, Entity, Index, JoinColumn, ManyToOne, PrimaryGeneratedColumn } from 'typeorm';
import { DeviceTypeEntity } from './device-type.entity';

@Entity('lots')
export class LotEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'varchar', length: 40, unique: true }) code: string;
  @Index() @Column({ type: 'uuid' }) deviceTypeId: string;
  @ManyToOne(() => DeviceTypeEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'device_type_id' })
  deviceType?: DeviceTypeEntity;
  @Column({ type: 'int' }) quantity: number;
  @Column({ type: 'varchar', length: 20, default: '' }) dateCode: string;
  @Column({ type: 'varchar', length: 500, default: '' }) notes: string;
  /** Traceability: the wafer lot the dice came from, the assembly (package) lot, the die revision. */
  @Column({ type: 'varchar', length: 40, default: '' }) waferLot: string;
  @Column({ type: 'varchar', length: 40, default: '' }) assemblyLot: string;
  @Column({ type: 'varchar', length: 20, default: '' }) dieRevision: string;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

@Entity('devices')
@Index(['lotId', 'serial'], { unique: true })
export class DeviceEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) lotId: string;
  @ManyToOne(() => LotEntity, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'lot_id' })
  lot?: LotEntity;
  @Column({ type: 'varchar', length: 40 }) serial: string;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
}

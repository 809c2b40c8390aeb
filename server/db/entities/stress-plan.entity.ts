import { BeforeInsert, Column, CreateDateColumn, Entity, Index, JoinColumn, ManyToOne, PrimaryGeneratedColumn } from 'typeorm';
import { METHOD_CHAMBER_BAND_K, type ChamberBandK } from '../../../shared/domain/standards';
import type { Bias, Criteria, PlanCheckResult, PlanInput, PlanKind } from '../../../shared/schemas/plans';
import { DeviceTypeEntity } from './device-type.entity';

/**
 * One version of a stress plan. Editing a plan writes a new row with the same planKey and
 * version + 1; a run points at the exact row it was booked with.
 */
@Entity('stress_plans')
@Index(['planKey', 'version'], { unique: true })
export class StressPlanEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'uuid' }) planKey: string;
  @Column({ type: 'int' }) version: number;
  @Column({ type: 'varchar', length: 120 }) name: string;
  @Column({ type: 'varchar', length: 8 }) kind: PlanKind;
  @Index() @Column({ type: 'uuid' }) deviceTypeId: string;
  @ManyToOne(() => DeviceTypeEntity, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'device_type_id' })
  deviceType?: DeviceTypeEntity;
  @Column({ type: 'double precision' }) chamberC: number;
  /** Band in kelvin around chamberC where the chamber counts as at temperature (a minimum with +x/−0 for HTRB). */
  @Column({ type: 'jsonb' }) chamberBand: ChamberBandK;
  @Column({ type: 'double precision', nullable: true }) humidityPct: number | null;
  @Column({ type: 'jsonb' }) bias: Bias;
  @Column({ type: 'double precision' }) durationH: number;
  @Column({ type: 'jsonb' }) readPointsH: number[];
  @Column({ type: 'int' }) sampleSize: number;
  @Column({ type: 'int' }) acceptNumber: number;
  @Column({ type: 'jsonb' }) criteria: Criteria;
  @Column({ type: 'double precision', default: 0.7 }) eaEv: number;
  @Column({ type: 'double precision', default: 55 }) useC: number;
  @Column({ type: 'jsonb', nullable: true }) cycle: PlanInput['cycle'];
  /** Temperature cycling (tc): extremes, dwell, ramp, cycles; null for other kinds. */
  @Column({ type: 'jsonb', nullable: true }) thermalCycle: PlanInput['thermalCycle'];
  /** Autoclave / unbiased HAST (ac): the condition code; null for other kinds. */
  @Column({ type: 'varchar', length: 16, nullable: true }) acCondition: PlanInput['acCondition'];
  @Column({ type: 'double precision', default: 0.8 }) breakdownDerating: number;
  @Column({ type: 'text', default: '' }) notes: string;
  /** The plan check as computed when this version was saved (findings, numbers, constants). */
  @Column({ type: 'jsonb', nullable: true }) checkResult: PlanCheckResult | null;
  /** Only the newest version of a plan is current; older ones stay for the runs that use them. */
  @Column({ type: 'boolean', default: true }) current: boolean;
  @Column({ type: 'uuid', nullable: true }) createdById: string | null;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;

  /** A version created without a band (fixtures, seeds) gets its method's band, as the API's schema gives one. */
  @BeforeInsert()
  defaultChamberBand(): void {
    this.chamberBand ??= { ...METHOD_CHAMBER_BAND_K[this.kind] };
  }
}

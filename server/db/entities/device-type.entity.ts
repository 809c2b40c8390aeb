import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm';

/** A part number's ratings and thermal data. Voltages are magnitudes (PNP parts too). */
@Entity('device_types')
export class DeviceTypeEntity {
  @PrimaryGeneratedColumn('uuid') id: string;
  @Column({ type: 'varchar', length: 40, unique: true }) partNumber: string;
  @Column({ type: 'varchar', length: 200, default: '' }) description: string;
  @Column({ type: 'varchar', length: 12, default: 'bjt' }) kind: 'bjt' | 'mosfet' | 'diode';
  @Column({ type: 'varchar', length: 12 }) polarity: 'NPN' | 'PNP' | 'N-channel' | 'P-channel' | 'rectifier';
  @Column({ type: 'double precision' }) bvcboV: number;
  @Column({ type: 'double precision', nullable: true }) bvceoV: number | null;
  @Column({ type: 'double precision' }) bveboV: number;
  @Column({ type: 'double precision' }) icMaxA: number;
  @Column({ type: 'double precision' }) pMaxW: number;
  @Column({ type: 'double precision', default: 25 }) pRatedAtC: number;
  @Column({ type: 'double precision' }) tjMaxC: number;
  /** Storage temperature range (data sheet Tstg); null when not entered. */
  @Column({ type: 'double precision', nullable: true }) tstgMinC: number | null;
  @Column({ type: 'double precision', nullable: true }) tstgMaxC: number | null;
  @Column({ type: 'double precision' }) thetaJcCPerW: number;
  @Column({ type: 'double precision' }) thetaJaCPerW: number;
  @Column({ type: 'double precision' }) betaRef: number;
  @Column({ type: 'double precision' }) betaRefIcA: number;
  @Column({ type: 'double precision', default: 25 }) betaRefTC: number;
  @Column({ type: 'double precision', default: 1.5 }) xtb: number;
  @Column({ type: 'double precision', nullable: true }) icboRefA: number | null;
  /** Hot-leakage point: ICBO at a stated temperature and VCB (all three or none). */
  @Column({ type: 'double precision', nullable: true }) icboHotA: number | null;
  @Column({ type: 'double precision', nullable: true }) icboHotC: number | null;
  @Column({ type: 'double precision', nullable: true }) icboHotVcbV: number | null;
  /** Second breakdown: knee voltage and slope n of I·V^n = const (defaults in shared/domain/standards.ts). */
  @Column({ type: 'double precision', default: 20 }) sbKneeV: number;
  @Column({ type: 'double precision', default: 2 }) sbSlopeN: number;
  @Column({ type: 'double precision', default: 3 }) breakdownN: number;
  @CreateDateColumn({ type: 'timestamptz' }) createdAt: Date;
  @UpdateDateColumn({ type: 'timestamptz' }) updatedAt: Date;
}

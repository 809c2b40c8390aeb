import { Column, Entity, PrimaryColumn } from 'typeorm';
import { bigintNumber } from './columns';

/** One chamber report (shared/mqtt chamber message): the air and the load's temperature, set point, humidity, pressure. */
@Entity('chamber_samples')
export class ChamberSampleEntity {
  @PrimaryColumn({ type: 'uuid' }) rigId: string;
  @PrimaryColumn({ type: 'bigint', transformer: bigintNumber }) seq: number;
  @Column({ type: 'timestamptz' }) ts: Date;
  @Column({ type: 'double precision' }) clockS: number;
  @Column({ type: 'real' }) airC: number;
  @Column({ type: 'real' }) loadC: number;
  @Column({ type: 'real' }) setpointC: number;
  @Column({ type: 'real', nullable: true }) humidityPct: number | null;
  @Column({ type: 'real', nullable: true }) pressureKPa: number | null;
  @Column({ type: 'boolean', default: false }) doorOpen: boolean;
}

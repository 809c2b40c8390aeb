import { Column, Entity, PrimaryColumn } from 'typeorm';
import { bigintNumber } from './columns';

/**
 * One socket's power-cycling report within a telemetry message (cycling rigs only; the rig's
 * counter of completed cycles and the smallest / largest junction swing since its previous
 * message, shared/mqtt/payloads.ts). Bulk-loaded with COPY next to telemetry_samples.
 */
@Entity('telemetry_cycles')
export class TelemetryCycleEntity {
  @PrimaryColumn({ type: 'uuid' }) rigId: string;
  @PrimaryColumn({ type: 'bigint', transformer: bigintNumber }) seq: number;
  @PrimaryColumn({ type: 'smallint' }) socket: number;
  @Column({ type: 'int' }) cycles: number;
  @Column({ type: 'real', nullable: true }) dTjLowC: number | null;
  @Column({ type: 'real', nullable: true }) dTjHighC: number | null;
}

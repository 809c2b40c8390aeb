import { Check, Column, Entity, PrimaryColumn } from 'typeorm';

/** The lab's settings: one row (id 1). Changes are audited (action lab-settings.update). */
@Entity('lab_settings')
@Check('CHK_lab_settings_single_row', `"id" = 1`)
export class LabSettingsEntity {
  @PrimaryColumn({ type: 'smallint' }) id: number;
  /** Read-point holds and the end of stress remove bias at or below this chamber temperature, °C (shared/holds). */
  @Column({ type: 'double precision' }) coolUnderBiasToC: number;
  /** The chamber may be opened at or below this, °C. */
  @Column({ type: 'double precision' }) safeToOpenC: number;
  @Column({ type: 'timestamptz', nullable: true }) updatedAt: Date | null;
  @Column({ type: 'uuid', nullable: true }) updatedById: string | null;
}

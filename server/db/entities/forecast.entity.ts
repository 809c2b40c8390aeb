import { Check, Column, Entity, PrimaryColumn } from 'typeorm';

/** The chance of passing below which engineers are told after a read-point upload: one row (id 1). Audited (forecast.alert.update). */
@Entity('forecast_alert_settings')
@Check('CHK_forecast_alert_settings_single_row', `"id" = 1`)
export class ForecastAlertSettingEntity {
  @PrimaryColumn({ type: 'smallint' }) id: number;
  @Column({ type: 'double precision' }) below: number;
  @Column({ type: 'timestamptz', nullable: true }) updatedAt: Date | null;
  @Column({ type: 'uuid', nullable: true }) updatedById: string | null;
}

/** Per lot: whether its chance of passing was below the threshold when last looked at, so a crossing is told once. */
@Entity('forecast_alert_states')
export class ForecastAlertStateEntity {
  @PrimaryColumn({ type: 'uuid' }) lotId: string;
  @Column({ type: 'boolean' }) below: boolean;
  @Column({ type: 'double precision', nullable: true }) pPass: number | null;
  @Column({ type: 'timestamptz' }) changedAt: Date;
}

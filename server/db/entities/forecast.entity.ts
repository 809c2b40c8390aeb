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

/**
 * An engineer's own alert level (issue "See the verdict coming"): `below` their level, or null when
 * they turned the alert off. No row: the lab's level (forecast_alert_settings) while their read-point
 * notices are on. Audited (forecast.alert.own.update).
 */
@Entity('forecast_alert_levels')
@Check('CHK_forecast_alert_levels_below', `"below" IS NULL OR ("below" >= 0.01 AND "below" <= 0.99)`)
export class ForecastAlertLevelEntity {
  @PrimaryColumn({ type: 'uuid' }) userId: string;
  @Column({ type: 'double precision', nullable: true }) below: number | null;
  @Column({ type: 'timestamptz' }) updatedAt: Date;
}

/** Per lot and engineer: whether the lot's chance of passing was below that engineer's level when last looked at (told once per crossing). */
@Entity('forecast_alert_user_states')
export class ForecastAlertUserStateEntity {
  @PrimaryColumn({ type: 'uuid' }) lotId: string;
  @PrimaryColumn({ type: 'uuid' }) userId: string;
  @Column({ type: 'boolean' }) below: boolean;
  @Column({ type: 'double precision', nullable: true }) level: number | null;
  @Column({ type: 'timestamptz' }) changedAt: Date;
}

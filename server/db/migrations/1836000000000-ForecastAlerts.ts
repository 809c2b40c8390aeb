import type { MigrationInterface, QueryRunner } from 'typeorm';

/** The verdict forecast's alert (issue #25): the lab's threshold (one row, 0.5 to start) and each lot's last side of it. */
export class ForecastAlerts1836000000000 implements MigrationInterface {
  name = 'ForecastAlerts1836000000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(
      `CREATE TABLE "forecast_alert_settings" ("id" smallint NOT NULL, "below" double precision NOT NULL, "updated_at" TIMESTAMP WITH TIME ZONE, "updated_by_id" uuid, CONSTRAINT "CHK_forecast_alert_settings_single_row" CHECK ("id" = 1), CONSTRAINT "PK_forecast_alert_settings" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`INSERT INTO "forecast_alert_settings" ("id", "below") VALUES (1, 0.5)`);
    await queryRunner.query(
      `CREATE TABLE "forecast_alert_states" ("lot_id" uuid NOT NULL, "below" boolean NOT NULL, "p_pass" double precision, "changed_at" TIMESTAMP WITH TIME ZONE NOT NULL, CONSTRAINT "PK_forecast_alert_states" PRIMARY KEY ("lot_id"), CONSTRAINT "FK_forecast_alert_states_lot" FOREIGN KEY ("lot_id") REFERENCES "lots"("id") ON DELETE CASCADE)`,
    );
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`DROP TABLE "forecast_alert_states"`);
    await queryRunner.query(`DROP TABLE "forecast_alert_settings"`);
  }
}

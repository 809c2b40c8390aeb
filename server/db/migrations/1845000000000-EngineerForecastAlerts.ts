import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Each engineer's own forecast alert level (issue "See the verdict coming"): a level, or null for
 * "off"; no row follows the lab's level (forecast_alert_settings). The side of each engineer's level
 * a lot was on when last looked at, so a crossing is told once per engineer. Engineers' states start
 * from the lot's side of the lab's level, so a lot already announced is not announced again.
 */
export class EngineerForecastAlerts1845000000000 implements MigrationInterface {
  name = 'EngineerForecastAlerts1845000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(
      `CREATE TABLE "forecast_alert_levels" ("user_id" uuid NOT NULL, "below" double precision, "updated_at" TIMESTAMP WITH TIME ZONE NOT NULL, CONSTRAINT "CHK_forecast_alert_levels_below" CHECK ("below" IS NULL OR ("below" >= 0.01 AND "below" <= 0.99)), CONSTRAINT "PK_forecast_alert_levels" PRIMARY KEY ("user_id"), CONSTRAINT "FK_forecast_alert_levels_user" FOREIGN KEY ("user_id") REFERENCES "users"("id") ON DELETE CASCADE)`,
    );
    await q.query(
      `CREATE TABLE "forecast_alert_user_states" ("lot_id" uuid NOT NULL, "user_id" uuid NOT NULL, "below" boolean NOT NULL, "level" double precision, "changed_at" TIMESTAMP WITH TIME ZONE NOT NULL, CONSTRAINT "PK_forecast_alert_user_states" PRIMARY KEY ("lot_id", "user_id"), CONSTRAINT "FK_forecast_alert_user_states_lot" FOREIGN KEY ("lot_id") REFERENCES "lots"("id") ON DELETE CASCADE, CONSTRAINT "FK_forecast_alert_user_states_user" FOREIGN KEY ("user_id") REFERENCES "users"("id") ON DELETE CASCADE)`,
    );
    await q.query(
      `INSERT INTO "forecast_alert_user_states" ("lot_id", "user_id", "below", "level", "changed_at")
       SELECT s."lot_id", u."id", s."below", a."below", s."changed_at"
         FROM "forecast_alert_states" s CROSS JOIN "users" u LEFT JOIN "forecast_alert_settings" a ON a."id" = 1
        WHERE u."role" = 'engineer'`,
    );
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE "forecast_alert_user_states"`);
    await q.query(`DROP TABLE "forecast_alert_levels"`);
  }
}

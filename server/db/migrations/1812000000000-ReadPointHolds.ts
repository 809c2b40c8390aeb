import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Read-point holds per the methods (issue #20 item 2): the hold's phase on the run (cool under bias,
 * oven shared, bias off, safe to open) and the lab's hold settings, one row seeded with the defaults
 * of shared/holds (DEFAULT_HOLD_SETTINGS: bias off at 35 °C, safe to open at 40 °C).
 */
export class ReadPointHolds1812000000000 implements MigrationInterface {
  name = 'ReadPointHolds1812000000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "runs" ADD "hold_phase" character varying(24)`);
    await queryRunner.query(`ALTER TABLE "runs" ADD "hold_phase_since" TIMESTAMP WITH TIME ZONE`);
    await queryRunner.query(
      `ALTER TABLE "runs" ADD CONSTRAINT "CHK_runs_hold_phase" CHECK ("hold_phase" IS NULL OR "hold_phase" IN ('cool-under-bias','oven-shared','bias-off','safe-to-open'))`,
    );
    await queryRunner.query(
      `CREATE TABLE "lab_settings" ("id" smallint NOT NULL, "cool_under_bias_to_c" double precision NOT NULL, "safe_to_open_c" double precision NOT NULL, "updated_at" TIMESTAMP WITH TIME ZONE, "updated_by_id" uuid, CONSTRAINT "CHK_lab_settings_single_row" CHECK ("id" = 1), CONSTRAINT "PK_lab_settings" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`INSERT INTO "lab_settings" ("id", "cool_under_bias_to_c", "safe_to_open_c") VALUES (1, 35, 40)`);
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`DROP TABLE "lab_settings"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP CONSTRAINT "CHK_runs_hold_phase"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP COLUMN "hold_phase_since"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP COLUMN "hold_phase"`);
  }
}

import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Issue #20 items 3 and 5: the plan's chamber band in kelvin, the device's hot-leakage point and
 * its second-breakdown line.
 * Existing plan versions keep the band they were checked and run with: ±3 % of their set value
 * (at least ±1 K, the ambient alarm's old floor), so a run in progress accrues as before. New plans
 * default to the method's band (shared/domain/standards.ts METHOD_CHAMBER_BAND_K).
 */
export class RatingsBandsLeakageSoa1813000000000 implements MigrationInterface {
  name = 'RatingsBandsLeakageSoa1813000000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "stress_plans" ADD "chamber_band" jsonb`);
    await queryRunner.query(
      `UPDATE "stress_plans" SET "chamber_band" = jsonb_build_object(
         'belowK', GREATEST(round((0.03 * abs("chamber_c"))::numeric, 3), 1)::double precision,
         'aboveK', GREATEST(round((0.03 * abs("chamber_c"))::numeric, 3), 1)::double precision)`,
    );
    await queryRunner.query(`ALTER TABLE "stress_plans" ALTER COLUMN "chamber_band" SET NOT NULL`);
    await queryRunner.query(`ALTER TABLE "device_types" ADD "icbo_hot_a" double precision`);
    await queryRunner.query(`ALTER TABLE "device_types" ADD "icbo_hot_c" double precision`);
    await queryRunner.query(`ALTER TABLE "device_types" ADD "icbo_hot_vcb_v" double precision`);
    await queryRunner.query(`ALTER TABLE "device_types" ADD "sb_knee_v" double precision NOT NULL DEFAULT '20'`);
    await queryRunner.query(`ALTER TABLE "device_types" ADD "sb_slope_n" double precision NOT NULL DEFAULT '2'`);
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "device_types" DROP COLUMN "sb_slope_n"`);
    await queryRunner.query(`ALTER TABLE "device_types" DROP COLUMN "sb_knee_v"`);
    await queryRunner.query(`ALTER TABLE "device_types" DROP COLUMN "icbo_hot_vcb_v"`);
    await queryRunner.query(`ALTER TABLE "device_types" DROP COLUMN "icbo_hot_c"`);
    await queryRunner.query(`ALTER TABLE "device_types" DROP COLUMN "icbo_hot_a"`);
    await queryRunner.query(`ALTER TABLE "stress_plans" DROP COLUMN "chamber_band"`);
  }
}

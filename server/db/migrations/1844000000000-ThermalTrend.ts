import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The thermal path's trend rule (shared/thermal/rules.ts): each stored identification carries the
 * rule's latest evaluation (`trend`, null before it has enough fits), whether the fit joined the
 * trend's series, and which rule held the flag when it was raised ('step' or 'trend').
 */
export class ThermalTrend1844000000000 implements MigrationInterface {
  name = 'ThermalTrend1844000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "socket_thermal_fits"
      ADD COLUMN "trend" jsonb,
      ADD COLUMN "trend_point" boolean NOT NULL DEFAULT false,
      ADD COLUMN "flag_rule" varchar(5) CONSTRAINT "CHK_thermal_fit_flag_rule" CHECK ("flag_rule" IS NULL OR "flag_rule" IN ('step', 'trend'))`);
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "socket_thermal_fits" DROP COLUMN "flag_rule", DROP COLUMN "trend_point", DROP COLUMN "trend"`);
  }
}

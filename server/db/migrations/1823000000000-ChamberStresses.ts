import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Unbiased chamber stresses (temperature cycling, storage, autoclave): the device's storage rating
 * (Tstg), a rig kind ('board' or 'chamber') with the chamber's cold limit and vessel pressure, the
 * plan's cycling profile and autoclave condition, and the chamber's own telemetry (air and load
 * temperature, the cycle counter's state per run).
 */
export class ChamberStresses1823000000000 implements MigrationInterface {
  name = 'ChamberStresses1823000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "device_types" ADD "tstg_min_c" double precision`);
    await q.query(`ALTER TABLE "device_types" ADD "tstg_max_c" double precision`);
    await q.query(`ALTER TABLE "rigs" ADD "kind" character varying(12) NOT NULL DEFAULT 'board'`);
    await q.query(`ALTER TABLE "rigs" ADD CONSTRAINT "CHK_rigs_kind" CHECK ("kind" IN ('board', 'chamber'))`);
    await q.query(`ALTER TABLE "rigs" ADD "min_temp_c" double precision`);
    await q.query(`ALTER TABLE "rigs" ADD "max_pressure_k_pa" double precision`);
    await q.query(`ALTER TABLE "stress_plans" ADD "thermal_cycle" jsonb`);
    await q.query(`ALTER TABLE "stress_plans" ADD "ac_condition" character varying(16)`);
    await q.query(
      `CREATE TABLE "chamber_samples" ("rig_id" uuid NOT NULL, "seq" bigint NOT NULL, "ts" TIMESTAMP WITH TIME ZONE NOT NULL, "clock_s" double precision NOT NULL, "air_c" real NOT NULL, "load_c" real NOT NULL, "setpoint_c" real NOT NULL, "humidity_pct" real, "pressure_k_pa" real, "door_open" boolean NOT NULL DEFAULT false, CONSTRAINT "PK_chamber_samples" PRIMARY KEY ("rig_id", "seq"))`,
    );
    await q.query(
      `ALTER TABLE "chamber_samples" ADD CONSTRAINT "FK_chamber_samples_rig" FOREIGN KEY ("rig_id") REFERENCES "rigs"("id") ON DELETE CASCADE`,
    );
    await q.query(`ALTER TABLE "runs" ADD "chamber_counter" jsonb`);
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "runs" DROP COLUMN "chamber_counter"`);
    await q.query(`DROP TABLE "chamber_samples"`);
    await q.query(`ALTER TABLE "stress_plans" DROP COLUMN "ac_condition"`);
    await q.query(`ALTER TABLE "stress_plans" DROP COLUMN "thermal_cycle"`);
    await q.query(`ALTER TABLE "rigs" DROP COLUMN "max_pressure_k_pa"`);
    await q.query(`ALTER TABLE "rigs" DROP COLUMN "min_temp_c"`);
    await q.query(`ALTER TABLE "rigs" DROP CONSTRAINT "CHK_rigs_kind"`);
    await q.query(`ALTER TABLE "rigs" DROP COLUMN "kind"`);
    await q.query(`ALTER TABLE "device_types" DROP COLUMN "tstg_max_c"`);
    await q.query(`ALTER TABLE "device_types" DROP COLUMN "tstg_min_c"`);
  }
}

import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Each socket's identified thermal path over a run (issue #25 item 2; server/modules/thermal):
 * one row per identification made at a bias-on, a power step, or periodically (stored when θ moved
 * or a while has passed), with its fit quality, or an honest "not identifiable" at a step.
 */
export class SocketThermalFits1837000000000 implements MigrationInterface {
  name = 'SocketThermalFits1837000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE "socket_thermal_fits" (
      "id" bigserial PRIMARY KEY,
      "rig_id" uuid NOT NULL REFERENCES "rigs"("id") ON DELETE CASCADE,
      "run_id" uuid REFERENCES "runs"("id") ON DELETE CASCADE,
      "socket_index" integer NOT NULL,
      "identified_at" timestamptz NOT NULL,
      "stress_clock_s" double precision NOT NULL,
      "trigger" varchar(12) NOT NULL CONSTRAINT "CHK_thermal_fit_trigger" CHECK ("trigger" IN ('bias-on', 'power-step', 'periodic')),
      "identifiable" boolean NOT NULL,
      "good" boolean NOT NULL,
      "method" varchar(8) CONSTRAINT "CHK_thermal_fit_method" CHECK ("method" IS NULL OR "method" IN ('arx', 'steady')),
      "theta_c_per_w" double precision,
      "tau_s" double precision,
      "tau_note" text,
      "offset_c" double precision,
      "offset_basis" varchar(10) NOT NULL CONSTRAINT "CHK_thermal_fit_offset" CHECK ("offset_basis" IN ('bias-off', 'chamber', 'fitted')),
      "r2" double precision,
      "rms_c" double precision,
      "samples" integer NOT NULL,
      "sample_interval_s" double precision,
      "mean_power_w" double precision NOT NULL,
      "baseline_theta_c_per_w" double precision,
      "rise_fraction" double precision,
      "reason" text
    )`);
    await q.query(`CREATE INDEX "IDX_thermal_fits_socket" ON "socket_thermal_fits" ("rig_id", "socket_index", "identified_at" DESC)`);
    await q.query(`CREATE INDEX "IDX_thermal_fits_run" ON "socket_thermal_fits" ("run_id", "socket_index", "identified_at")`);
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE "socket_thermal_fits"`);
  }
}

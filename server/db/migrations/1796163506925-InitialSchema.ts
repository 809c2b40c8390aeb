import { MigrationInterface, QueryRunner } from 'typeorm';

export class InitialSchema1796163506925 implements MigrationInterface {
  name = 'InitialSchema1796163506925';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(
      `CREATE TABLE "users" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "email" character varying(254) NOT NULL, "name" character varying(120) NOT NULL, "role" character varying(16) NOT NULL, "password_hash" character varying(100) NOT NULL, "active" boolean NOT NULL DEFAULT true, "failed_sign_ins" integer NOT NULL DEFAULT '0', "locked_until" TIMESTAMP WITH TIME ZONE, "last_sign_in_at" TIMESTAMP WITH TIME ZONE, "notify_alarms" boolean NOT NULL DEFAULT true, "notify_read_points" boolean NOT NULL DEFAULT true, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), "updated_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "UQ_97672ac88f789774dd47f7c8be3" UNIQUE ("email"), CONSTRAINT "PK_a3ffb1c0c8416b9fc6f907b7433" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "device_types" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "part_number" character varying(40) NOT NULL, "description" character varying(200) NOT NULL DEFAULT '', "kind" character varying(12) NOT NULL DEFAULT 'bjt', "polarity" character varying(12) NOT NULL, "bvcbo_v" double precision NOT NULL, "bvceo_v" double precision, "bvebo_v" double precision NOT NULL, "ic_max_a" double precision NOT NULL, "p_max_w" double precision NOT NULL, "p_rated_at_c" double precision NOT NULL DEFAULT '25', "tj_max_c" double precision NOT NULL, "theta_jc_c_per_w" double precision NOT NULL, "theta_ja_c_per_w" double precision NOT NULL, "beta_ref" double precision NOT NULL, "beta_ref_ic_a" double precision NOT NULL, "beta_ref_tc" double precision NOT NULL DEFAULT '25', "xtb" double precision NOT NULL DEFAULT '1.5', "icbo_ref_a" double precision, "breakdown_n" double precision NOT NULL DEFAULT '3', "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), "updated_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "UQ_3999a46e9b2c8a6c6d492ddb53f" UNIQUE ("part_number"), CONSTRAINT "PK_c22e8985afe8ffe3ee485e41af8" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "lots" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "code" character varying(40) NOT NULL, "device_type_id" uuid NOT NULL, "quantity" integer NOT NULL, "date_code" character varying(20) NOT NULL DEFAULT '', "notes" character varying(500) NOT NULL DEFAULT '', "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "UQ_110009fd77b0095863e07a3d2d2" UNIQUE ("code"), CONSTRAINT "PK_2bb990a4015865cb1daa1d22fd9" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_04fd5dcf63d71a83013f4eed11" ON "lots" ("device_type_id") `);
    await queryRunner.query(
      `CREATE TABLE "devices" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "lot_id" uuid NOT NULL, "serial" character varying(40) NOT NULL, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_b1514758245c12daf43486dd1f0" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE UNIQUE INDEX "IDX_ec64ad77aede3821195558f148" ON "devices" ("lot_id", "serial") `);
    await queryRunner.query(
      `CREATE TABLE "rigs" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "code" character varying(32) NOT NULL, "name" character varying(80) NOT NULL, "location" character varying(80) NOT NULL DEFAULT '', "socket_count" integer NOT NULL, "max_temp_c" double precision NOT NULL, "max_voltage_v" double precision NOT NULL, "humidity_capable" boolean NOT NULL DEFAULT false, "max_humidity_pct" double precision, "active" boolean NOT NULL DEFAULT true, "mqtt_username" character varying(64) NOT NULL, "mqtt_secret_hash" character varying(100) NOT NULL, "credentials_issued_at" TIMESTAMP WITH TIME ZONE NOT NULL, "credentials_revoked_at" TIMESTAMP WITH TIME ZONE, "online" boolean NOT NULL DEFAULT false, "last_seen_at" TIMESTAMP WITH TIME ZONE, "last_seq" bigint NOT NULL DEFAULT '0', "chamber_c" double precision, "setpoint_c" double precision, "humidity_pct" double precision, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "UQ_f319593dbe570b83845538cc2ed" UNIQUE ("code"), CONSTRAINT "UQ_97519558ed81807e78c7c622e8d" UNIQUE ("mqtt_username"), CONSTRAINT "PK_b9ca97ac4a77eec6b366352a577" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "rig_maintenance" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "rig_id" uuid NOT NULL, "starts_at" TIMESTAMP WITH TIME ZONE NOT NULL, "ends_at" TIMESTAMP WITH TIME ZONE NOT NULL, "reason" character varying(200) NOT NULL DEFAULT '', "created_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_8c4aeaa8d78d69fdee204e1de8d" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_fa12c5442845cdeaf68807d537" ON "rig_maintenance" ("rig_id") `);
    await queryRunner.query(
      `CREATE TABLE "stress_plans" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "plan_key" uuid NOT NULL, "version" integer NOT NULL, "name" character varying(120) NOT NULL, "kind" character varying(8) NOT NULL, "device_type_id" uuid NOT NULL, "chamber_c" double precision NOT NULL, "humidity_pct" double precision, "bias" jsonb NOT NULL, "duration_h" double precision NOT NULL, "read_points_h" jsonb NOT NULL, "sample_size" integer NOT NULL, "accept_number" integer NOT NULL, "criteria" jsonb NOT NULL, "ea_ev" double precision NOT NULL DEFAULT '0.7', "use_c" double precision NOT NULL DEFAULT '55', "cycle" jsonb, "breakdown_derating" double precision NOT NULL DEFAULT '0.8', "notes" text NOT NULL DEFAULT '', "check_result" jsonb, "current" boolean NOT NULL DEFAULT true, "created_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_1ec3e8b043f9b2dd9a622c4fb7e" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_c47884855edf615f5ed2f49f6b" ON "stress_plans" ("device_type_id") `);
    await queryRunner.query(`CREATE UNIQUE INDEX "IDX_f8744773ce65594834771b74ce" ON "stress_plans" ("plan_key", "version") `);
    await queryRunner.query(
      `CREATE TABLE "runs" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "code" character varying(32) NOT NULL, "plan_id" uuid NOT NULL, "rig_id" uuid, "state" character varying(16) NOT NULL, "sample_size" integer NOT NULL, "scheduled_start" TIMESTAMP WITH TIME ZONE, "scheduled_end" TIMESTAMP WITH TIME ZONE, "started_at" TIMESTAMP WITH TIME ZONE, "finished_at" TIMESTAMP WITH TIME ZONE, "state_changed_at" TIMESTAMP WITH TIME ZONE NOT NULL, "stress_hours" double precision NOT NULL DEFAULT '0', "next_read_point" integer NOT NULL DEFAULT '0', "accrued_to_seq" bigint NOT NULL DEFAULT '0', "accrued_to_clock_s" double precision, "heating_since" TIMESTAMP WITH TIME ZONE, "ambient_reached_at" TIMESTAMP WITH TIME ZONE, "bias_removed_at" TIMESTAMP WITH TIME ZONE, "abort_reason" text, "override_reason" text, "override_by_id" uuid, "created_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), "updated_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), "row_version" integer NOT NULL, CONSTRAINT "UQ_b8fe9da0d3acb2765e7f05fa749" UNIQUE ("code"), CONSTRAINT "PK_46d6a1e257c38ba58f1a3c30836" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_5fc040d6689117e26fa51cf9bc" ON "runs" ("plan_id") `);
    await queryRunner.query(`CREATE INDEX "IDX_23af5d7062a34a30a82d5c1fc3" ON "runs" ("rig_id") `);
    await queryRunner.query(`CREATE INDEX "IDX_0445eb8563b00641a6187045dd" ON "runs" ("state") `);
    await queryRunner.query(
      `CREATE TABLE "run_lots" ("run_id" uuid NOT NULL, "lot_id" uuid NOT NULL, CONSTRAINT "PK_c0739eb4650d5f2ea59d87c1249" PRIMARY KEY ("run_id", "lot_id"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "run_sockets" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "run_id" uuid NOT NULL, "socket_index" integer NOT NULL, "device_id" uuid NOT NULL, "accrued_hours" double precision NOT NULL DEFAULT '0', "tripped" boolean NOT NULL DEFAULT false, "tripped_at" TIMESTAMP WITH TIME ZONE, "trip_reason" text, "failed_at_h" double precision, CONSTRAINT "PK_479be985c69b3026b2b945b662b" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE UNIQUE INDEX "IDX_e0addec8d1ccf9e6952a60b94e" ON "run_sockets" ("run_id", "device_id") `);
    await queryRunner.query(`CREATE UNIQUE INDEX "IDX_2cf8746fec1560a0e8a51066a6" ON "run_sockets" ("run_id", "socket_index") `);
    await queryRunner.query(
      `CREATE TABLE "telemetry_batches" ("rig_id" uuid NOT NULL, "seq" bigint NOT NULL, "ts" TIMESTAMP WITH TIME ZONE NOT NULL, "stress_clock_s" double precision NOT NULL, "chamber_c" real NOT NULL, "humidity_pct" real, "setpoint_c" real NOT NULL, "stored_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_996b4aec707c0f6f0ded8fe48af" PRIMARY KEY ("rig_id", "seq"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_2829fdfc661d31336dc905bec0" ON "telemetry_batches" ("rig_id", "ts") `);
    await queryRunner.query(
      `CREATE TABLE "telemetry_samples" ("rig_id" uuid NOT NULL, "seq" bigint NOT NULL, "socket" smallint NOT NULL, "case_c" real NOT NULL, "v_v" real NOT NULL, "i_a" double precision NOT NULL, "bias_on" boolean NOT NULL, "tripped" boolean NOT NULL DEFAULT false, CONSTRAINT "PK_b5f89c186ac3eb64132ee319021" PRIMARY KEY ("rig_id", "seq", "socket"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "telemetry_rollups" ("rig_id" uuid NOT NULL, "socket" smallint NOT NULL, "minute" TIMESTAMP WITH TIME ZONE NOT NULL, "n" integer NOT NULL, "sum_c" double precision NOT NULL, "min_c" real NOT NULL, "max_c" real NOT NULL, "sum_ia" double precision NOT NULL, "stress_clock_s" double precision, CONSTRAINT "PK_5d862bf56caf6d3283c23b2b9da" PRIMARY KEY ("rig_id", "socket", "minute"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "rejected_messages" ("id" BIGSERIAL NOT NULL, "at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), "topic" character varying(200) NOT NULL, "rig_code" character varying(32), "reason" text NOT NULL, "excerpt" text NOT NULL, CONSTRAINT "PK_1e08a15f68627d7fcd536348ac6" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "system_counters" ("name" character varying(64) NOT NULL, "value" bigint NOT NULL DEFAULT '0', "updated_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_1998046ba6e83410deabed6ad3c" PRIMARY KEY ("name"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "measurements" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "run_id" uuid NOT NULL, "device_id" uuid NOT NULL, "read_point_h" double precision NOT NULL, "hfe" double precision, "hfe_ic_a" double precision, "hfe_vce_v" double precision, "icbo_a" double precision, "icbo_vcb_v" double precision, "vcesat_v" double precision, "bvceo_v" double precision, "measured_c" double precision NOT NULL DEFAULT '25', "measured_at" TIMESTAMP WITH TIME ZONE NOT NULL, "late" boolean NOT NULL DEFAULT false, "upload_id" uuid, "entered_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_3c0e7812563f27fd68e8271661b" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_acf83d5d15e7dfac4254acf0a5" ON "measurements" ("device_id") `);
    await queryRunner.query(
      `CREATE UNIQUE INDEX "IDX_f8b9a1ca4f6f63f56a0bb9ed38" ON "measurements" ("run_id", "device_id", "read_point_h") `,
    );
    await queryRunner.query(
      `CREATE TABLE "measurement_uploads" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "run_id" uuid NOT NULL, "read_point_h" double precision NOT NULL, "file_sha256" character(64) NOT NULL, "file_name" character varying(200) NOT NULL, "rows_total" integer NOT NULL, "rows_stored" integer NOT NULL, "rows_rejected" integer NOT NULL, "row_errors" jsonb NOT NULL DEFAULT '[]', "uploaded_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_63bdbbddc510fb2ab2a6bb040fd" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE UNIQUE INDEX "IDX_8ded94c9b90c2e592a4be7676b" ON "measurement_uploads" ("run_id", "file_sha256") `);
    await queryRunner.query(
      `CREATE TABLE "alarms" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "kind" character varying(32) NOT NULL, "severity" character varying(12) NOT NULL, "rig_id" uuid, "run_id" uuid, "socket_index" integer, "title" character varying(200) NOT NULL, "message" text NOT NULL, "details" jsonb NOT NULL DEFAULT '{}', "dedupe_key" character varying(120) NOT NULL, "raised_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), "acknowledged_at" TIMESTAMP WITH TIME ZONE, "acknowledged_by_id" uuid, "ack_note" text, "cleared_at" TIMESTAMP WITH TIME ZONE, CONSTRAINT "PK_b776da486fb19d38b4f7777a6da" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_bf00c425d598f815e7d8a4cede" ON "alarms" ("rig_id") `);
    await queryRunner.query(`CREATE INDEX "IDX_2233da6437d0f74f7450fa241a" ON "alarms" ("run_id") `);
    await queryRunner.query(`CREATE INDEX "IDX_ee1c0cc57962fd27a44c87d0f4" ON "alarms" ("dedupe_key") `);
    await queryRunner.query(`CREATE INDEX "IDX_0dabd9d1f0973bd05c89ab85a1" ON "alarms" ("acknowledged_at", "raised_at") `);
    await queryRunner.query(
      `CREATE TABLE "notifications" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "user_id" uuid NOT NULL, "kind" character varying(32) NOT NULL, "title" character varying(200) NOT NULL, "body" text NOT NULL, "link" character varying(200), "read_at" TIMESTAMP WITH TIME ZONE, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_6a72c3c0f683f6462415e653c3a" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_5323ccd23482802bd9759e88ee" ON "notifications" ("user_id", "read_at") `);
    await queryRunner.query(
      `CREATE TABLE "mail_log" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "to_address" character varying(254) NOT NULL, "subject" character varying(200) NOT NULL, "body" text NOT NULL, "kind" character varying(32) NOT NULL, "status" character varying(8) NOT NULL, "error" text, "message_id" character varying(200), "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_01528929d58f733fd6bc613c638" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(
      `CREATE TABLE "audit_log" ("id" BIGSERIAL NOT NULL, "at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), "actor_id" uuid, "actor" character varying(254) NOT NULL, "action" character varying(64) NOT NULL, "entity" character varying(32) NOT NULL, "entity_id" character varying(64), "reason" text, "details" jsonb NOT NULL DEFAULT '{}', CONSTRAINT "PK_07fefa57f7f5ab8fc3f52b3ed0b" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_ba27cef5b8b2b1a756e06ebcc5" ON "audit_log" ("at") `);
    await queryRunner.query(`CREATE INDEX "IDX_40c0e9a60edcd0f680b0e94b60" ON "audit_log" ("entity", "entity_id") `);
    await queryRunner.query(
      `ALTER TABLE "lots" ADD CONSTRAINT "FK_04fd5dcf63d71a83013f4eed111" FOREIGN KEY ("device_type_id") REFERENCES "device_types"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "devices" ADD CONSTRAINT "FK_59bdec3c4caf3eec0f41d5966d5" FOREIGN KEY ("lot_id") REFERENCES "lots"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "rig_maintenance" ADD CONSTRAINT "FK_fa12c5442845cdeaf68807d5373" FOREIGN KEY ("rig_id") REFERENCES "rigs"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "stress_plans" ADD CONSTRAINT "FK_c47884855edf615f5ed2f49f6b0" FOREIGN KEY ("device_type_id") REFERENCES "device_types"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "runs" ADD CONSTRAINT "FK_5fc040d6689117e26fa51cf9bc6" FOREIGN KEY ("plan_id") REFERENCES "stress_plans"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "runs" ADD CONSTRAINT "FK_23af5d7062a34a30a82d5c1fc3c" FOREIGN KEY ("rig_id") REFERENCES "rigs"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "run_lots" ADD CONSTRAINT "FK_d5eb38134edd9c849dc9a5ebb37" FOREIGN KEY ("run_id") REFERENCES "runs"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "run_lots" ADD CONSTRAINT "FK_51e82fe0f769cfa90e6302b1ced" FOREIGN KEY ("lot_id") REFERENCES "lots"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "run_sockets" ADD CONSTRAINT "FK_09e95a4fef2b2506d28a98dd05c" FOREIGN KEY ("run_id") REFERENCES "runs"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "run_sockets" ADD CONSTRAINT "FK_efc6ac79e8f07e452dd1b7ce99d" FOREIGN KEY ("device_id") REFERENCES "devices"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "measurements" ADD CONSTRAINT "FK_4a0d6d835798a18003b7628c389" FOREIGN KEY ("run_id") REFERENCES "runs"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "measurements" ADD CONSTRAINT "FK_acf83d5d15e7dfac4254acf0a5b" FOREIGN KEY ("device_id") REFERENCES "devices"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    // Sessions for express-session via connect-pg-simple (its documented table shape).
    await queryRunner.query(
      `CREATE TABLE "session" ("sid" varchar NOT NULL COLLATE "default", "sess" json NOT NULL, "expire" timestamp(6) NOT NULL, CONSTRAINT "session_pkey" PRIMARY KEY ("sid"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_session_expire" ON "session" ("expire")`);
    await queryRunner.query(
      `ALTER TABLE "users" ADD CONSTRAINT "CHK_users_role" CHECK ("role" IN ('admin','engineer','operator','manager'))`,
    );
    await queryRunner.query(
      `ALTER TABLE "runs" ADD CONSTRAINT "CHK_runs_state" CHECK ("state" IN ('booked','loading','heating','stressing','paused','read-hold','cooling','finished','aborted'))`,
    );
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "runs" DROP CONSTRAINT "CHK_runs_state"`);
    await queryRunner.query(`ALTER TABLE "users" DROP CONSTRAINT "CHK_users_role"`);
    await queryRunner.query(`DROP TABLE "session"`);
    await queryRunner.query(`ALTER TABLE "measurements" DROP CONSTRAINT "FK_acf83d5d15e7dfac4254acf0a5b"`);
    await queryRunner.query(`ALTER TABLE "measurements" DROP CONSTRAINT "FK_4a0d6d835798a18003b7628c389"`);
    await queryRunner.query(`ALTER TABLE "run_sockets" DROP CONSTRAINT "FK_efc6ac79e8f07e452dd1b7ce99d"`);
    await queryRunner.query(`ALTER TABLE "run_sockets" DROP CONSTRAINT "FK_09e95a4fef2b2506d28a98dd05c"`);
    await queryRunner.query(`ALTER TABLE "run_lots" DROP CONSTRAINT "FK_51e82fe0f769cfa90e6302b1ced"`);
    await queryRunner.query(`ALTER TABLE "run_lots" DROP CONSTRAINT "FK_d5eb38134edd9c849dc9a5ebb37"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP CONSTRAINT "FK_23af5d7062a34a30a82d5c1fc3c"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP CONSTRAINT "FK_5fc040d6689117e26fa51cf9bc6"`);
    await queryRunner.query(`ALTER TABLE "stress_plans" DROP CONSTRAINT "FK_c47884855edf615f5ed2f49f6b0"`);
    await queryRunner.query(`ALTER TABLE "rig_maintenance" DROP CONSTRAINT "FK_fa12c5442845cdeaf68807d5373"`);
    await queryRunner.query(`ALTER TABLE "devices" DROP CONSTRAINT "FK_59bdec3c4caf3eec0f41d5966d5"`);
    await queryRunner.query(`ALTER TABLE "lots" DROP CONSTRAINT "FK_04fd5dcf63d71a83013f4eed111"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_40c0e9a60edcd0f680b0e94b60"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_ba27cef5b8b2b1a756e06ebcc5"`);
    await queryRunner.query(`DROP TABLE "audit_log"`);
    await queryRunner.query(`DROP TABLE "mail_log"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_5323ccd23482802bd9759e88ee"`);
    await queryRunner.query(`DROP TABLE "notifications"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_0dabd9d1f0973bd05c89ab85a1"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_ee1c0cc57962fd27a44c87d0f4"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_2233da6437d0f74f7450fa241a"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_bf00c425d598f815e7d8a4cede"`);
    await queryRunner.query(`DROP TABLE "alarms"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_8ded94c9b90c2e592a4be7676b"`);
    await queryRunner.query(`DROP TABLE "measurement_uploads"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_f8b9a1ca4f6f63f56a0bb9ed38"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_acf83d5d15e7dfac4254acf0a5"`);
    await queryRunner.query(`DROP TABLE "measurements"`);
    await queryRunner.query(`DROP TABLE "system_counters"`);
    await queryRunner.query(`DROP TABLE "rejected_messages"`);
    await queryRunner.query(`DROP TABLE "telemetry_rollups"`);
    await queryRunner.query(`DROP TABLE "telemetry_samples"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_2829fdfc661d31336dc905bec0"`);
    await queryRunner.query(`DROP TABLE "telemetry_batches"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_2cf8746fec1560a0e8a51066a6"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_e0addec8d1ccf9e6952a60b94e"`);
    await queryRunner.query(`DROP TABLE "run_sockets"`);
    await queryRunner.query(`DROP TABLE "run_lots"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_0445eb8563b00641a6187045dd"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_23af5d7062a34a30a82d5c1fc3"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_5fc040d6689117e26fa51cf9bc"`);
    await queryRunner.query(`DROP TABLE "runs"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_f8744773ce65594834771b74ce"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_c47884855edf615f5ed2f49f6b"`);
    await queryRunner.query(`DROP TABLE "stress_plans"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_fa12c5442845cdeaf68807d537"`);
    await queryRunner.query(`DROP TABLE "rig_maintenance"`);
    await queryRunner.query(`DROP TABLE "rigs"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_ec64ad77aede3821195558f148"`);
    await queryRunner.query(`DROP TABLE "devices"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_04fd5dcf63d71a83013f4eed11"`);
    await queryRunner.query(`DROP TABLE "lots"`);
    await queryRunner.query(`DROP TABLE "device_types"`);
    await queryRunner.query(`DROP TABLE "users"`);
  }
}

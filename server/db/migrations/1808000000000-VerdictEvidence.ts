import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * The evidence a lot verdict stands on (issue #19): samples (one or several runs booked together,
 * with a recorded deviation when smaller than the plan), per-device dispositions, catastrophic
 * results and the measuring-condition flag on measurements.
 * Existing runs each become a sample of their own (sample id = run id); their size is compared
 * with the plan by the verdict, so an old short booking shows as an insufficient sample.
 */
export class VerdictEvidence1808000000000 implements MigrationInterface {
  name = 'VerdictEvidence1808000000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(
      `CREATE TABLE "samples" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "plan_id" uuid NOT NULL, "planned_size" integer NOT NULL, "booked_size" integer NOT NULL, "deviation_reason" text, "deviation_by_id" uuid, "deviation_at" TIMESTAMP WITH TIME ZONE, "created_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_d68b5b3bd25a6851b033fb63444" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_370d4f6299de995f59a7265003" ON "samples" ("plan_id") `);
    await queryRunner.query(
      `CREATE TABLE "device_dispositions" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "run_id" uuid NOT NULL, "device_id" uuid NOT NULL, "read_point_h" double precision NOT NULL, "kind" character varying(16) NOT NULL, "reason" text NOT NULL, "by_id" uuid, "by_name" character varying(120) NOT NULL, "at" TIMESTAMP WITH TIME ZONE NOT NULL, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_8481a363dc91bb38e35f97bef0a" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_8f4226a0f65897b1c4b317479a" ON "device_dispositions" ("device_id") `);
    await queryRunner.query(`CREATE UNIQUE INDEX "IDX_f4babdee991d167bf2c86b976f" ON "device_dispositions" ("run_id", "device_id") `);
    await queryRunner.query(`ALTER TABLE "runs" ADD "sample_id" uuid`);
    await queryRunner.query(`ALTER TABLE "measurements" ADD "result" character varying(12) NOT NULL DEFAULT 'measured'`);
    await queryRunner.query(`ALTER TABLE "measurements" ADD "conditions_flag" text`);
    await queryRunner.query(`ALTER TABLE "measurements" ADD "confirmed_by_id" uuid`);
    await queryRunner.query(`ALTER TABLE "measurements" ADD "confirmed_at" TIMESTAMP WITH TIME ZONE`);
    await queryRunner.query(`ALTER TABLE "measurements" ADD "confirm_reason" text`);
    await queryRunner.query(`CREATE INDEX "IDX_eef038dd58493ee94e60a9aa24" ON "runs" ("sample_id") `);
    await queryRunner.query(
      `ALTER TABLE "samples" ADD CONSTRAINT "FK_370d4f6299de995f59a72650039" FOREIGN KEY ("plan_id") REFERENCES "stress_plans"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "runs" ADD CONSTRAINT "FK_eef038dd58493ee94e60a9aa244" FOREIGN KEY ("sample_id") REFERENCES "samples"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "device_dispositions" ADD CONSTRAINT "FK_d43ddc4febaec55bc2cf538cae3" FOREIGN KEY ("run_id") REFERENCES "runs"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "device_dispositions" ADD CONSTRAINT "FK_8f4226a0f65897b1c4b317479aa" FOREIGN KEY ("device_id") REFERENCES "devices"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
    await queryRunner.query(
      `ALTER TABLE "device_dispositions" ADD CONSTRAINT "CHK_device_dispositions_kind" CHECK ("kind" IN ('lost','damaged','excluded','trip-failure','reseated'))`,
    );
    await queryRunner.query(
      `ALTER TABLE "measurements" ADD CONSTRAINT "CHK_measurements_result" CHECK ("result" IN ('measured','open','short','no-reading'))`,
    );
    await queryRunner.query(`INSERT INTO "samples" ("id", "plan_id", "planned_size", "booked_size", "created_by_id", "created_at")
            SELECT r."id", r."plan_id", p."sample_size", r."sample_size", r."created_by_id", r."created_at" FROM "runs" r JOIN "stress_plans" p ON p."id" = r."plan_id"`);
    await queryRunner.query(`UPDATE "runs" SET "sample_id" = "id" WHERE "sample_id" IS NULL`);
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "measurements" DROP CONSTRAINT "CHK_measurements_result"`);
    await queryRunner.query(`ALTER TABLE "device_dispositions" DROP CONSTRAINT "CHK_device_dispositions_kind"`);
    await queryRunner.query(`ALTER TABLE "device_dispositions" DROP CONSTRAINT "FK_8f4226a0f65897b1c4b317479aa"`);
    await queryRunner.query(`ALTER TABLE "device_dispositions" DROP CONSTRAINT "FK_d43ddc4febaec55bc2cf538cae3"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP CONSTRAINT "FK_eef038dd58493ee94e60a9aa244"`);
    await queryRunner.query(`ALTER TABLE "samples" DROP CONSTRAINT "FK_370d4f6299de995f59a72650039"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_eef038dd58493ee94e60a9aa24"`);
    await queryRunner.query(`ALTER TABLE "measurements" DROP COLUMN "confirm_reason"`);
    await queryRunner.query(`ALTER TABLE "measurements" DROP COLUMN "confirmed_at"`);
    await queryRunner.query(`ALTER TABLE "measurements" DROP COLUMN "confirmed_by_id"`);
    await queryRunner.query(`ALTER TABLE "measurements" DROP COLUMN "conditions_flag"`);
    await queryRunner.query(`ALTER TABLE "measurements" DROP COLUMN "result"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP COLUMN "sample_id"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_f4babdee991d167bf2c86b976f"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_8f4226a0f65897b1c4b317479a"`);
    await queryRunner.query(`DROP TABLE "device_dispositions"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_370d4f6299de995f59a7265003"`);
    await queryRunner.query(`DROP TABLE "samples"`);
  }
}

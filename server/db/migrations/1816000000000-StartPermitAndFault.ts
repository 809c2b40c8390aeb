import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Permit to start and the run fault state (issue #20 item 7, issue #23 item 2):
 * - rigs carry their calibration-due date and the date of their last interlock test, each entry
 *   kept in rig_service_records (the maintenance record);
 * - runs may be in 'fault' (a rig refused or did not confirm a command), with its reason and time.
 */
export class StartPermitAndFault1816000000000 implements MigrationInterface {
  name = 'StartPermitAndFault1816000000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "rigs" ADD "calibration_due_at" TIMESTAMP WITH TIME ZONE`);
    await queryRunner.query(`ALTER TABLE "rigs" ADD "interlock_tested_at" TIMESTAMP WITH TIME ZONE`);
    await queryRunner.query(
      `CREATE TABLE "rig_service_records" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "rig_id" uuid NOT NULL, "kind" character varying(20) NOT NULL, "done_at" TIMESTAMP WITH TIME ZONE NOT NULL, "due_at" TIMESTAMP WITH TIME ZONE, "note" character varying(200) NOT NULL DEFAULT '', "created_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_caf080548445ccfd38888abcc37" PRIMARY KEY ("id"))`,
    );
    await queryRunner.query(`CREATE INDEX "IDX_3002bb40076853eecb56d83b9c" ON "rig_service_records" ("rig_id") `);
    await queryRunner.query(
      `ALTER TABLE "rig_service_records" ADD CONSTRAINT "FK_3002bb40076853eecb56d83b9cd" FOREIGN KEY ("rig_id") REFERENCES "rigs"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await queryRunner.query(`ALTER TABLE "runs" ADD "fault_reason" text`);
    await queryRunner.query(`ALTER TABLE "runs" ADD "fault_at" TIMESTAMP WITH TIME ZONE`);
    await queryRunner.query(`ALTER TABLE "runs" DROP CONSTRAINT "CHK_runs_state"`);
    await queryRunner.query(
      `ALTER TABLE "runs" ADD CONSTRAINT "CHK_runs_state" CHECK ("state" IN ('booked','loading','heating','stressing','paused','read-hold','cooling','fault','finished','aborted'))`,
    );
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`UPDATE "runs" SET "state" = 'paused' WHERE "state" = 'fault'`);
    await queryRunner.query(`ALTER TABLE "runs" DROP CONSTRAINT "CHK_runs_state"`);
    await queryRunner.query(
      `ALTER TABLE "runs" ADD CONSTRAINT "CHK_runs_state" CHECK ("state" IN ('booked','loading','heating','stressing','paused','read-hold','cooling','finished','aborted'))`,
    );
    await queryRunner.query(`ALTER TABLE "runs" DROP COLUMN "fault_at"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP COLUMN "fault_reason"`);
    await queryRunner.query(`ALTER TABLE "rig_service_records" DROP CONSTRAINT "FK_3002bb40076853eecb56d83b9cd"`);
    await queryRunner.query(`DROP INDEX "public"."IDX_3002bb40076853eecb56d83b9c"`);
    await queryRunner.query(`DROP TABLE "rig_service_records"`);
    await queryRunner.query(`ALTER TABLE "rigs" DROP COLUMN "interlock_tested_at"`);
    await queryRunner.query(`ALTER TABLE "rigs" DROP COLUMN "calibration_due_at"`);
  }
}

import { MigrationInterface, QueryRunner } from 'typeorm';

/** Qualifications (issue #22 item 1): the qualification and its cells (stress group × lot). */
export class Qualifications1821000000000 implements MigrationInterface {
  name = 'Qualifications1821000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(
      `CREATE TABLE "qualifications" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "code" character varying(40) NOT NULL, "name" character varying(160) NOT NULL, "template_key" character varying(24) NOT NULL, "groups" jsonb NOT NULL, "device_type_ids" jsonb NOT NULL, "lot_ids" jsonb NOT NULL, "family_rule" text NOT NULL DEFAULT '', "created_by_id" uuid, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "UQ_qualifications_code" UNIQUE ("code"), CONSTRAINT "PK_qualifications" PRIMARY KEY ("id"))`,
    );
    await q.query(
      `CREATE TABLE "qualification_cells" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "qualification_id" uuid NOT NULL, "group_key" character varying(24) NOT NULL, "lot_id" uuid NOT NULL, "position" integer NOT NULL, "plan_kind" character varying(8), "planned_sample" integer NOT NULL, "accept_number" integer NOT NULL, "waiver_reason" text, "waived_by_id" uuid, "waived_at" TIMESTAMP WITH TIME ZONE, "external_result" character varying(4), "external_by" character varying(120), "external_at" TIMESTAMP WITH TIME ZONE, "external_document" character varying(200), "external_recorded_by_id" uuid, CONSTRAINT "PK_qualification_cells" PRIMARY KEY ("id"), CONSTRAINT "CHK_qualification_cells_external" CHECK ("external_result" IS NULL OR "external_result" IN ('pass','fail')))`,
    );
    await q.query(`CREATE INDEX "IDX_qualification_cells_qualification" ON "qualification_cells" ("qualification_id")`);
    await q.query(`CREATE INDEX "IDX_qualification_cells_lot" ON "qualification_cells" ("lot_id")`);
    await q.query(
      `CREATE UNIQUE INDEX "IDX_qualification_cells_group_lot" ON "qualification_cells" ("qualification_id", "group_key", "lot_id")`,
    );
    await q.query(
      `ALTER TABLE "qualification_cells" ADD CONSTRAINT "FK_qualification_cells_qualification" FOREIGN KEY ("qualification_id") REFERENCES "qualifications"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await q.query(
      `ALTER TABLE "qualification_cells" ADD CONSTRAINT "FK_qualification_cells_lot" FOREIGN KEY ("lot_id") REFERENCES "lots"("id") ON DELETE RESTRICT ON UPDATE NO ACTION`,
    );
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE "qualification_cells"`);
    await q.query(`DROP TABLE "qualifications"`);
  }
}

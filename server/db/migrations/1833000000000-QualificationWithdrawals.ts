import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Withdrawn waivers and outside results of qualification cells (issue #22): the cell's record is
 * cleared, and what it said is kept here with who withdrew it, when and why (and in the audit log).
 */
export class QualificationWithdrawals1833000000000 implements MigrationInterface {
  name = 'QualificationWithdrawals1833000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(
      `CREATE TABLE "qualification_cell_withdrawals" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "qualification_id" uuid NOT NULL, "cell_id" uuid NOT NULL, "record" character varying(8) NOT NULL, "withdrawn" jsonb NOT NULL, "reason" text NOT NULL, "withdrawn_by_id" uuid, "withdrawn_at" TIMESTAMP WITH TIME ZONE NOT NULL, CONSTRAINT "PK_qualification_cell_withdrawals" PRIMARY KEY ("id"), CONSTRAINT "CHK_qualification_cell_withdrawals_record" CHECK ("record" IN ('waiver','external')))`,
    );
    await q.query(`CREATE INDEX "IDX_qualification_cell_withdrawals_cell" ON "qualification_cell_withdrawals" ("cell_id")`);
    await q.query(
      `ALTER TABLE "qualification_cell_withdrawals" ADD CONSTRAINT "FK_qualification_cell_withdrawals_cell" FOREIGN KEY ("cell_id") REFERENCES "qualification_cells"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
    await q.query(
      `ALTER TABLE "qualification_cell_withdrawals" ADD CONSTRAINT "FK_qualification_cell_withdrawals_qualification" FOREIGN KEY ("qualification_id") REFERENCES "qualifications"("id") ON DELETE CASCADE ON UPDATE NO ACTION`,
    );
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE "qualification_cell_withdrawals"`);
  }
}

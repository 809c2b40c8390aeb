import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Traceability of a lot (issue #22 item 3): the wafer lot it was diced from, the assembly lot it
 * was packaged in and the die revision, as fields of their own (they lived in free-text notes).
 * Notes that name a wafer lot the way the demo wrote it ("…, wafer lot W88") give the field its
 * value and lose that phrase; any other note stays as it was.
 */
export class LotTraceability1822000000000 implements MigrationInterface {
  name = 'LotTraceability1822000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "lots" ADD "wafer_lot" character varying(40) NOT NULL DEFAULT ''`);
    await q.query(`ALTER TABLE "lots" ADD "assembly_lot" character varying(40) NOT NULL DEFAULT ''`);
    await q.query(`ALTER TABLE "lots" ADD "die_revision" character varying(20) NOT NULL DEFAULT ''`);
    await q.query(
      `UPDATE "lots" SET "wafer_lot" = substring("notes" from '(?:^|, )wafer lot ([A-Za-z0-9._-]{1,40})$'),
                         "notes" = regexp_replace("notes", '(^|, )wafer lot [A-Za-z0-9._-]{1,40}$', '')
        WHERE "notes" ~ '(^|, )wafer lot [A-Za-z0-9._-]{1,40}$'`,
    );
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "lots" DROP COLUMN "die_revision"`);
    await q.query(`ALTER TABLE "lots" DROP COLUMN "assembly_lot"`);
    await q.query(`ALTER TABLE "lots" DROP COLUMN "wafer_lot"`);
  }
}

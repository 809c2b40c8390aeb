import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * read-point-overdue alarms belong to a run (alarms.service.ts, RUN_SCOPED_KINDS): their dedupe key
 * now ends in `:run:<run id>`. Alarms raised before keep working under the new key — a held run
 * leaving its hold clears its own, and the next overdue report of the same run updates it instead of
 * opening a second one.
 */
export class RunScopedAlarmKeys1796400000000 implements MigrationInterface {
  name = 'RunScopedAlarmKeys1796400000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(
      `UPDATE "alarms" SET "dedupe_key" = "dedupe_key" || ':run:' || COALESCE("run_id"::text, '-')
       WHERE "kind" = 'read-point-overdue' AND "dedupe_key" NOT LIKE '%:run:%'`,
    );
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(
      `UPDATE "alarms" SET "dedupe_key" = split_part("dedupe_key", ':run:', 1)
       WHERE "kind" = 'read-point-overdue' AND "dedupe_key" LIKE '%:run:%'`,
    );
  }
}

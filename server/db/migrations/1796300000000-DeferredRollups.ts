import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * For the deferred rollups (server/modules/telemetry/rollups.ts):
 * - an index on telemetry_batches.stored_at, so recovery after a crash finds the batches stored
 *   since the last rollup write without scanning the table;
 * - room on the pages of rows the ingest updates in place (rollups, counters, rigs' live columns),
 *   so each new row version can be a heap-only tuple (HOT): no new index entry per update, old
 *   versions pruned as the page is read. TypeORM does not model storage parameters.
 */
export class DeferredRollups1796300000000 implements MigrationInterface {
  name = 'DeferredRollups1796300000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`CREATE INDEX "IDX_telemetry_batches_stored_at" ON "telemetry_batches" ("stored_at")`);
    await queryRunner.query(`ALTER TABLE "telemetry_rollups" SET (fillfactor = 50)`);
    await queryRunner.query(`ALTER TABLE "system_counters" SET (fillfactor = 50)`);
    await queryRunner.query(`ALTER TABLE "rigs" SET (fillfactor = 70)`);
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "rigs" RESET (fillfactor)`);
    await queryRunner.query(`ALTER TABLE "system_counters" RESET (fillfactor)`);
    await queryRunner.query(`ALTER TABLE "telemetry_rollups" RESET (fillfactor)`);
    await queryRunner.query(`DROP INDEX "IDX_telemetry_batches_stored_at"`);
  }
}

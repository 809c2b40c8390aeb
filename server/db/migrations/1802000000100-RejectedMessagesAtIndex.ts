import { MigrationInterface, QueryRunner } from 'typeorm';

/** rejected_messages is pruned by age (telemetry/rejections-retention.ts): an index on `at` keeps that cheap. */
export class RejectedMessagesAtIndex1802000000100 implements MigrationInterface {
  name = 'RejectedMessagesAtIndex1802000000100';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`CREATE INDEX "IDX_rejected_messages_at" ON "rejected_messages" ("at")`);
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`DROP INDEX "IDX_rejected_messages_at"`);
  }
}

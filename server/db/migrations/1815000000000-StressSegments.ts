import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Each socket's credited hours with the junction temperature (and chamber humidity) they were
 * earned at, estimated from its own telemetry (issue #20 item 6): the FIT credits each device by
 * this history instead of the plan's predicted junction. Null for hours accrued before it existed.
 */
export class StressSegments1815000000000 implements MigrationInterface {
  name = 'StressSegments1815000000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "run_sockets" ADD "stress_segments" jsonb`);
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "run_sockets" DROP COLUMN "stress_segments"`);
  }
}

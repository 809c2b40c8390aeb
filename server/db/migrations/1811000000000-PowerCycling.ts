import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Power cycling (intermittent operating life): the rigs' per-socket cycle reports, and the cycles
 * credited to each run and each of its sockets (shared/scheduling/cycling.ts).
 */
export class PowerCycling1811000000000 implements MigrationInterface {
  name = 'PowerCycling1811000000000';

  public async up(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(
      `CREATE TABLE "telemetry_cycles" ("rig_id" uuid NOT NULL, "seq" bigint NOT NULL, "socket" smallint NOT NULL, "cycles" integer NOT NULL, "d_tj_low_c" real, "d_tj_high_c" real, CONSTRAINT "PK_4b2be4cc9d9448f51f387a52706" PRIMARY KEY ("rig_id", "seq", "socket"))`,
    );
    await queryRunner.query(`ALTER TABLE "runs" ADD "cycles_done" integer NOT NULL DEFAULT 0`);
    await queryRunner.query(`ALTER TABLE "run_sockets" ADD "cycles_done" integer NOT NULL DEFAULT 0`);
    await queryRunner.query(`ALTER TABLE "run_sockets" ADD "cycles_missed" integer NOT NULL DEFAULT 0`);
    await queryRunner.query(`ALTER TABLE "run_sockets" ADD "last_d_tj_low_c" real`);
    await queryRunner.query(`ALTER TABLE "run_sockets" ADD "last_d_tj_high_c" real`);
  }

  public async down(queryRunner: QueryRunner): Promise<void> {
    await queryRunner.query(`ALTER TABLE "run_sockets" DROP COLUMN "last_d_tj_high_c"`);
    await queryRunner.query(`ALTER TABLE "run_sockets" DROP COLUMN "last_d_tj_low_c"`);
    await queryRunner.query(`ALTER TABLE "run_sockets" DROP COLUMN "cycles_missed"`);
    await queryRunner.query(`ALTER TABLE "run_sockets" DROP COLUMN "cycles_done"`);
    await queryRunner.query(`ALTER TABLE "runs" DROP COLUMN "cycles_done"`);
    await queryRunner.query(`DROP TABLE "telemetry_cycles"`);
  }
}

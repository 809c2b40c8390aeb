import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Run requests carry a due date and a priority (issue #26 item 1): the proposer orders the calendar
 * by total weighted tardiness, Σ w·max(0, C − d), with the weight taken from the priority
 * (shared/domain/priority.ts). Runs booked before this migration get the normal priority and no
 * due date (they are never late).
 */
export class RunDueDatePriority1826000000000 implements MigrationInterface {
  name = 'RunDueDatePriority1826000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "runs" ADD "due_at" TIMESTAMP WITH TIME ZONE`);
    await q.query(`ALTER TABLE "runs" ADD "priority" smallint NOT NULL DEFAULT 2`);
    await q.query(`ALTER TABLE "runs" ADD CONSTRAINT "CHK_runs_priority" CHECK ("priority" BETWEEN 1 AND 4)`);
    await q.query(`CREATE INDEX "IDX_runs_due_at" ON "runs" ("due_at") WHERE "due_at" IS NOT NULL`);
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP INDEX "IDX_runs_due_at"`);
    await q.query(`ALTER TABLE "runs" DROP CONSTRAINT "CHK_runs_priority"`);
    await q.query(`ALTER TABLE "runs" DROP COLUMN "priority"`);
    await q.query(`ALTER TABLE "runs" DROP COLUMN "due_at"`);
  }
}

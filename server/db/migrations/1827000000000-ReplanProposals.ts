import { MigrationInterface, QueryRunner } from 'typeorm';

/** Re-plan proposals for booked runs whose rig went offline or into maintenance (issue #26 item 3). */
export class ReplanProposals1827000000000 implements MigrationInterface {
  name = 'ReplanProposals1827000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(
      `CREATE TABLE "replan_proposals" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "run_id" uuid NOT NULL, "kind" character varying(12) NOT NULL, "state" character varying(12) NOT NULL, "reason" text NOT NULL, "from_rig_id" uuid NOT NULL, "to_rig_id" uuid NOT NULL, "from_start" TIMESTAMP WITH TIME ZONE, "from_end" TIMESTAMP WITH TIME ZONE, "start_at" TIMESTAMP WITH TIME ZONE NOT NULL, "end_at" TIMESTAMP WITH TIME ZONE NOT NULL, "due_at" TIMESTAMP WITH TIME ZONE, "delay_basis" character varying(16) NOT NULL, "delay_h" double precision NOT NULL, "run_row_version" integer NOT NULL, "decided_by_id" uuid, "decided_at" TIMESTAMP WITH TIME ZONE, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_replan_proposals" PRIMARY KEY ("id"), CONSTRAINT "CHK_replan_kind" CHECK ("kind" IN ('move','in-place')), CONSTRAINT "CHK_replan_state" CHECK ("state" IN ('open','accepted','superseded')))`,
    );
    await q.query(`CREATE INDEX "IDX_replan_proposals_run_state" ON "replan_proposals" ("run_id", "state") `);
    await q.query(
      `ALTER TABLE "replan_proposals" ADD CONSTRAINT "FK_replan_proposals_run" FOREIGN KEY ("run_id") REFERENCES "runs"("id") ON DELETE CASCADE`,
    );
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE "replan_proposals"`);
  }
}

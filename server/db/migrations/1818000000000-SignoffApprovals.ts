import { MigrationInterface, QueryRunner } from 'typeorm';
import { entryHash } from '../../modules/audit/audit-chain';

/**
 * Records that hold up in an audit (issue #21 items 3–5): the per-user safety-approval grant,
 * override requests (asked by one person, decided by another), verdict signatures with the hash of
 * what they sign, and the audit log's hash chain. Entries written before this migration are
 * chained here, in id order, so `npm run audit:verify` covers the whole log.
 */
export class SignoffApprovals1818000000000 implements MigrationInterface {
  name = 'SignoffApprovals1818000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "users" ADD "safety_approver" boolean NOT NULL DEFAULT false`);
    await q.query(
      `CREATE TABLE "override_requests" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "plan_id" uuid NOT NULL, "state" character varying(12) NOT NULL, "findings" jsonb NOT NULL, "reason" text NOT NULL, "requested_by_id" uuid NOT NULL, "requested_at" TIMESTAMP WITH TIME ZONE NOT NULL, "decided_by_id" uuid, "decided_at" TIMESTAMP WITH TIME ZONE, "note" text, "used_by_sample_id" uuid, CONSTRAINT "PK_override_requests" PRIMARY KEY ("id"))`,
    );
    await q.query(`CREATE INDEX "IDX_override_requests_plan_state" ON "override_requests" ("plan_id", "state") `);
    await q.query(
      `CREATE TABLE "verdict_signatures" ("id" uuid NOT NULL DEFAULT gen_random_uuid(), "lot_id" uuid NOT NULL, "verdict" character varying(24) NOT NULL, "meaning" character varying(12) NOT NULL, "signer_id" uuid NOT NULL, "signer_name" character varying(120) NOT NULL, "signer_email" character varying(254) NOT NULL, "signed_at" TIMESTAMP WITH TIME ZONE NOT NULL, "data_hash" character(64) NOT NULL, "data" text NOT NULL, "created_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_verdict_signatures" PRIMARY KEY ("id"))`,
    );
    await q.query(`CREATE INDEX "IDX_verdict_signatures_lot" ON "verdict_signatures" ("lot_id") `);
    await q.query(`ALTER TABLE "audit_log" ADD "prev_hash" character(64)`);
    await q.query(`ALTER TABLE "audit_log" ADD "hash" character(64)`);
    // Chain what is already there (one pass, in id order).
    let prev: string | null = null;
    let after = '0';
    for (;;) {
      const rows: Array<{
        id: string;
        at: Date;
        actor_id: string | null;
        actor: string;
        action: string;
        entity: string;
        entity_id: string | null;
        reason: string | null;
        details: unknown;
      }> = await q.query(
        `SELECT id, at, actor_id, actor, action, entity, entity_id, reason, details FROM audit_log WHERE id > $1 ORDER BY id LIMIT 2000`,
        [after],
      );
      if (!rows.length) break;
      for (const r of rows) {
        // Stored `at` may carry microseconds; the chain covers what the driver reads (milliseconds), as the check does.
        const hash = entryHash({
          at: r.at,
          actorId: r.actor_id,
          actor: r.actor,
          action: r.action,
          entity: r.entity,
          entityId: r.entity_id,
          reason: r.reason,
          details: r.details,
          prevHash: prev,
        });
        await q.query(`UPDATE audit_log SET prev_hash = $2, hash = $3 WHERE id = $1`, [r.id, prev, hash]);
        prev = hash;
      }
      after = String(rows[rows.length - 1].id);
    }
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "audit_log" DROP COLUMN "hash"`);
    await q.query(`ALTER TABLE "audit_log" DROP COLUMN "prev_hash"`);
    await q.query(`DROP INDEX "public"."IDX_verdict_signatures_lot"`);
    await q.query(`DROP TABLE "verdict_signatures"`);
    await q.query(`DROP INDEX "public"."IDX_override_requests_plan_state"`);
    await q.query(`DROP TABLE "override_requests"`);
    await q.query(`ALTER TABLE "users" DROP COLUMN "safety_approver"`);
  }
}

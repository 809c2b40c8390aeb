import { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Workers that fail over (issue #24 item 4; server/cluster/):
 *
 * - `rig_commands`: every command to a rig, stored before it is published (server/modules/telemetry/
 *   command-store.ts). The key is (rig_code, cmd_id): a new leader that wants the same command finds
 *   it and, when the rig already answered, takes the stored answer instead of publishing again.
 *   `state`: queued (asked for by a process without the MQTT link, e.g. a standby's HTTP request),
 *   sent (published, no answer yet), acked, refused, expired (queued and never taken by a leader in time).
 * - `cluster_leader`: one row (id 1) naming the process that holds the leadership advisory lock and
 *   since when; written by the leader, read by /api/health. The lock itself is the truth.
 * - `rate_limit_hits`: the sign-in limiter's counters, shared by every API process.
 */
export class LeaderAndCommands1835000000000 implements MigrationInterface {
  name = 'LeaderAndCommands1835000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(
      `CREATE TABLE "rig_commands" (
        "rig_code" text NOT NULL,
        "cmd_id" text NOT NULL,
        "type" text NOT NULL,
        "body" jsonb NOT NULL,
        "state" text NOT NULL,
        "created_at" timestamptz NOT NULL DEFAULT now(),
        "sent_at" timestamptz,
        "answered_at" timestamptz,
        "publishes" integer NOT NULL DEFAULT 0,
        "sent_by" text,
        "error" text,
        CONSTRAINT "PK_rig_commands" PRIMARY KEY ("rig_code", "cmd_id"),
        CONSTRAINT "CHK_rig_commands_state" CHECK ("state" IN ('queued', 'sent', 'acked', 'refused', 'expired'))
      )`,
    );
    await q.query(`CREATE INDEX "IDX_rig_commands_open" ON "rig_commands" ("created_at") WHERE "state" IN ('queued', 'sent')`);
    await q.query(
      `CREATE TABLE "cluster_leader" (
        "id" smallint PRIMARY KEY CHECK ("id" = 1),
        "holder" text NOT NULL,
        "host" text NOT NULL,
        "pid" integer NOT NULL,
        "since" timestamptz NOT NULL,
        "heartbeat_at" timestamptz NOT NULL
      )`,
    );
    await q.query(
      `CREATE TABLE "rate_limit_hits" (
        "key" text PRIMARY KEY,
        "hits" integer NOT NULL,
        "reset_at" timestamptz NOT NULL
      )`,
    );
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE "rate_limit_hits"`);
    await q.query(`DROP TABLE "cluster_leader"`);
    await q.query(`DROP TABLE "rig_commands"`);
  }
}

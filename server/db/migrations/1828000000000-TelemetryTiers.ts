import { MigrationInterface, QueryRunner } from 'typeorm';

/** Day partitions for the days a table's rows fall on, plus yesterday … three days ahead (UTC). */
const partitionDays = (parent: string, source: string, col: string) =>
  `SELECT telemetry_day_partition('${parent}', d) FROM (
     SELECT DISTINCT (${col} AT TIME ZONE 'UTC')::date AS d FROM ${source}
     UNION SELECT generate_series((now() AT TIME ZONE 'UTC')::date - 1, (now() AT TIME ZONE 'UTC')::date + 3, interval '1 day')::date
   ) days ORDER BY d`;

/**
 * Telemetry storage that lasts (issue #24 item 1; server/modules/telemetry/upkeep.ts runs it):
 *
 * - `telemetry_batches` becomes one row per rig message **with its sockets as arrays** (socket,
 *   case_c, v_v, i_a, flags: bit 1 bias on, bit 2 tripped), range-partitioned by the rig's `ts`,
 *   one partition per UTC day (`telemetry_batches_pYYYYMMDD`) and a default partition for rows of
 *   a day that has none yet. The key becomes (rig_id, seq, ts): a partitioned table's unique key
 *   must hold the partition key; the ingest still refuses a second (rig_id, seq) (ingest-store.ts).
 * - `telemetry_samples` is now a view (one row per socket, as before) so every reader keeps its SQL;
 *   an INSTEAD OF INSERT trigger appends a socket to its message's arrays (tests and hand-written
 *   SQL that insert samples after their message keep working).
 * - `telemetry_rollups` (per minute) is partitioned by day of `minute` the same way.
 * - `telemetry_hourly`: hourly rollups, kept for good. `telemetry_kept`: the raw messages around
 *   every trip, alarm and read point, copied before their day is dropped, kept for good.
 * - `telemetry_day_partition(parent, day)` creates a day's partition (moving rows of that day out
 *   of the default partition first), once; the upkeep and this migration both call it.
 *
 * Existing rows are moved: messages with their samples folded into arrays (sockets in order),
 * rollups as they are, and the hourly tier computed from every minute rollup there is.
 */
export class TelemetryTiers1828000000000 implements MigrationInterface {
  name = 'TelemetryTiers1828000000000';

  public async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE "telemetry_batches" RENAME TO "telemetry_batches_v1"`);
    await q.query(`ALTER TABLE "telemetry_samples" RENAME TO "telemetry_samples_v1"`);
    await q.query(`ALTER TABLE "telemetry_rollups" RENAME TO "telemetry_rollups_v1"`);
    await q.query(`ALTER INDEX "IDX_telemetry_batches_stored_at" RENAME TO "IDX_telemetry_batches_v1_stored_at"`);

    await q.query(
      `CREATE TABLE "telemetry_batches" (
         "rig_id" uuid NOT NULL, "seq" bigint NOT NULL, "ts" TIMESTAMP WITH TIME ZONE NOT NULL,
         "stress_clock_s" double precision NOT NULL, "stored_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(),
         "chamber_c" real NOT NULL, "setpoint_c" real NOT NULL, "humidity_pct" real,
         "socket" smallint[] NOT NULL DEFAULT '{}', "case_c" real[] NOT NULL DEFAULT '{}', "v_v" real[] NOT NULL DEFAULT '{}',
         "i_a" double precision[] NOT NULL DEFAULT '{}', "flags" smallint[] NOT NULL DEFAULT '{}',
         CONSTRAINT "PK_telemetry_batches" PRIMARY KEY ("rig_id", "seq", "ts")
       ) PARTITION BY RANGE ("ts")`,
    );
    await q.query(`CREATE INDEX "IDX_telemetry_batches_rig_ts" ON "telemetry_batches" ("rig_id", "ts")`);
    await q.query(`CREATE INDEX "IDX_telemetry_batches_stored_at" ON "telemetry_batches" ("stored_at")`);
    await q.query(`CREATE TABLE "telemetry_batches_default" PARTITION OF "telemetry_batches" DEFAULT`);

    await q.query(
      `CREATE TABLE "telemetry_rollups" (
         "rig_id" uuid NOT NULL, "socket" smallint NOT NULL, "minute" TIMESTAMP WITH TIME ZONE NOT NULL, "n" integer NOT NULL,
         "sum_c" double precision NOT NULL, "min_c" real NOT NULL, "max_c" real NOT NULL, "sum_ia" double precision NOT NULL,
         "stress_clock_s" double precision,
         CONSTRAINT "PK_telemetry_rollups" PRIMARY KEY ("rig_id", "socket", "minute")
       ) PARTITION BY RANGE ("minute")`,
    );
    // Updated in place every few seconds while its minute is open: room for HOT updates (as before).
    await q.query(`CREATE TABLE "telemetry_rollups_default" PARTITION OF "telemetry_rollups" DEFAULT WITH (fillfactor = 50)`);

    await q.query(
      `CREATE FUNCTION telemetry_day_partition(parent text, day date) RETURNS text LANGUAGE plpgsql AS $fn$
       DECLARE
         part text := parent || '_p' || to_char(day, 'YYYYMMDD');
         keycol text := CASE parent WHEN 'telemetry_batches' THEN 'ts' WHEN 'telemetry_rollups' THEN 'minute' END;
         lo timestamptz := day::timestamp AT TIME ZONE 'UTC';
         hi timestamptz := (day + 1)::timestamp AT TIME ZONE 'UTC';
       BEGIN
         IF keycol IS NULL THEN RAISE EXCEPTION 'telemetry_day_partition: % is not a day-partitioned telemetry table', parent; END IF;
         IF to_regclass(part) IS NOT NULL THEN RETURN part; END IF;
         EXECUTE format('CREATE TABLE %I (LIKE %I INCLUDING DEFAULTS)', part, parent);
         IF parent = 'telemetry_rollups' THEN EXECUTE format('ALTER TABLE %I SET (fillfactor = 50)', part); END IF;
         EXECUTE format('WITH moved AS (DELETE FROM %I WHERE %I >= $1 AND %I < $2 RETURNING *) INSERT INTO %I SELECT * FROM moved',
                        parent || '_default', keycol, keycol, part) USING lo, hi;
         EXECUTE format('ALTER TABLE %I ADD CONSTRAINT %I CHECK (%I >= %L AND %I < %L)', part, part || '_day', keycol, lo, keycol, hi);
         EXECUTE format('ALTER TABLE %I ATTACH PARTITION %I FOR VALUES FROM (%L) TO (%L)', parent, part, lo, hi);
         EXECUTE format('ALTER TABLE %I DROP CONSTRAINT %I', part, part || '_day');
         RETURN part;
       END $fn$`,
    );

    // Messages, with their samples folded into arrays (sockets in order).
    await q.query(partitionDays('telemetry_batches', 'telemetry_batches_v1', 'ts'));
    await q.query(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, stored_at, chamber_c, setpoint_c, humidity_pct, socket, case_c, v_v, i_a, flags)
       SELECT b.rig_id, b.seq, b.ts, b.stress_clock_s, b.stored_at, b.chamber_c, b.setpoint_c, b.humidity_pct,
              coalesce(a.socket, '{}'), coalesce(a.case_c, '{}'), coalesce(a.v_v, '{}'), coalesce(a.i_a, '{}'), coalesce(a.flags, '{}')
       FROM telemetry_batches_v1 b
       LEFT JOIN (
         SELECT rig_id, seq, array_agg(socket ORDER BY socket) AS socket, array_agg(case_c ORDER BY socket) AS case_c,
                array_agg(v_v ORDER BY socket) AS v_v, array_agg(i_a ORDER BY socket) AS i_a,
                array_agg((bias_on::int + 2 * tripped::int)::smallint ORDER BY socket) AS flags
         FROM telemetry_samples_v1 GROUP BY rig_id, seq
       ) a ON a.rig_id = b.rig_id AND a.seq = b.seq`,
    );
    await q.query(partitionDays('telemetry_rollups', 'telemetry_rollups_v1', 'minute'));
    await q.query(`INSERT INTO telemetry_rollups SELECT * FROM telemetry_rollups_v1`);

    await q.query(
      `CREATE TABLE "telemetry_hourly" (
         "rig_id" uuid NOT NULL, "socket" smallint NOT NULL, "hour" TIMESTAMP WITH TIME ZONE NOT NULL, "n" integer NOT NULL,
         "sum_c" double precision NOT NULL, "min_c" real NOT NULL, "max_c" real NOT NULL, "sum_ia" double precision NOT NULL,
         "stress_clock_s" double precision,
         CONSTRAINT "PK_telemetry_hourly" PRIMARY KEY ("rig_id", "socket", "hour")
       )`,
    );
    await q.query(
      `INSERT INTO telemetry_hourly (rig_id, socket, hour, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
       SELECT rig_id, socket, date_trunc('hour', minute AT TIME ZONE 'UTC') AT TIME ZONE 'UTC', sum(n), sum(sum_c), min(min_c), max(max_c),
              sum(sum_ia), max(stress_clock_s)
       FROM telemetry_rollups_v1 GROUP BY 1, 2, 3`,
    );
    // The hourly upkeep rebuilds the hours touched by messages stored after this (upkeep.ts).
    await q.query(
      `INSERT INTO system_counters (name, value, updated_at) VALUES ('hourly_rolled_at_ms', (extract(epoch FROM now()) * 1000)::bigint, now())
       ON CONFLICT (name) DO UPDATE SET value = EXCLUDED.value, updated_at = now()`,
    );
    await q.query(
      `CREATE TABLE "telemetry_kept" (LIKE "telemetry_batches" INCLUDING DEFAULTS,
         CONSTRAINT "PK_telemetry_kept" PRIMARY KEY ("rig_id", "seq", "ts"))`,
    );
    await q.query(`CREATE INDEX "IDX_telemetry_kept_rig_ts" ON "telemetry_kept" ("rig_id", "ts")`);

    await q.query(`DROP TABLE "telemetry_samples_v1"`);
    await q.query(`DROP TABLE "telemetry_batches_v1"`);
    await q.query(`DROP TABLE "telemetry_rollups_v1"`);

    await q.query(
      `CREATE VIEW "telemetry_samples" AS
       SELECT b.rig_id, b.seq, x.socket, x.case_c, x.v_v, x.i_a, (x.flags & 1) <> 0 AS bias_on, (x.flags & 2) <> 0 AS tripped, b.ts
       FROM telemetry_batches b CROSS JOIN LATERAL unnest(b.socket, b.case_c, b.v_v, b.i_a, b.flags) AS x(socket, case_c, v_v, i_a, flags)`,
    );
    await q.query(
      `CREATE FUNCTION telemetry_samples_insert() RETURNS trigger LANGUAGE plpgsql AS $fn$
       BEGIN
         UPDATE telemetry_batches SET socket = socket || NEW.socket, case_c = case_c || NEW.case_c, v_v = v_v || NEW.v_v,
                i_a = i_a || NEW.i_a::double precision,
                flags = flags || (CASE WHEN NEW.bias_on THEN 1 ELSE 0 END + CASE WHEN coalesce(NEW.tripped, false) THEN 2 ELSE 0 END)::smallint
         WHERE rig_id = NEW.rig_id AND seq = NEW.seq;
         IF NOT FOUND THEN
           RAISE EXCEPTION 'telemetry_samples: no message (rig %, seq %) to add socket % to', NEW.rig_id, NEW.seq, NEW.socket;
         END IF;
         RETURN NEW;
       END $fn$`,
    );
    await q.query(
      `CREATE TRIGGER "telemetry_samples_insert" INSTEAD OF INSERT ON "telemetry_samples" FOR EACH ROW EXECUTE FUNCTION telemetry_samples_insert()`,
    );
    await q.query(`ANALYZE telemetry_batches, telemetry_rollups, telemetry_hourly`);
  }

  public async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP VIEW "telemetry_samples"`);
    await q.query(`DROP FUNCTION telemetry_samples_insert()`);
    await q.query(`ALTER TABLE "telemetry_batches" RENAME TO "telemetry_batches_v2"`);
    await q.query(`ALTER TABLE "telemetry_rollups" RENAME TO "telemetry_rollups_v2"`);
    await q.query(`DROP INDEX "IDX_telemetry_batches_stored_at"`);
    await q.query(
      `CREATE TABLE "telemetry_batches" ("rig_id" uuid NOT NULL, "seq" bigint NOT NULL, "ts" TIMESTAMP WITH TIME ZONE NOT NULL, "stress_clock_s" double precision NOT NULL, "chamber_c" real NOT NULL, "humidity_pct" real, "setpoint_c" real NOT NULL, "stored_at" TIMESTAMP WITH TIME ZONE NOT NULL DEFAULT now(), CONSTRAINT "PK_996b4aec707c0f6f0ded8fe48af" PRIMARY KEY ("rig_id", "seq"))`,
    );
    await q.query(`CREATE INDEX "IDX_2829fdfc661d31336dc905bec0" ON "telemetry_batches" ("rig_id", "ts")`);
    await q.query(`CREATE INDEX "IDX_telemetry_batches_stored_at" ON "telemetry_batches" ("stored_at")`);
    await q.query(
      `CREATE TABLE "telemetry_samples" ("rig_id" uuid NOT NULL, "seq" bigint NOT NULL, "socket" smallint NOT NULL, "case_c" real NOT NULL, "v_v" real NOT NULL, "i_a" double precision NOT NULL, "bias_on" boolean NOT NULL, "tripped" boolean NOT NULL DEFAULT false, CONSTRAINT "PK_b5f89c186ac3eb64132ee319021" PRIMARY KEY ("rig_id", "seq", "socket"))`,
    );
    await q.query(
      `CREATE TABLE "telemetry_rollups" ("rig_id" uuid NOT NULL, "socket" smallint NOT NULL, "minute" TIMESTAMP WITH TIME ZONE NOT NULL, "n" integer NOT NULL, "sum_c" double precision NOT NULL, "min_c" real NOT NULL, "max_c" real NOT NULL, "sum_ia" double precision NOT NULL, "stress_clock_s" double precision, CONSTRAINT "PK_5d862bf56caf6d3283c23b2b9da" PRIMARY KEY ("rig_id", "socket", "minute")) WITH (fillfactor = 50)`,
    );
    // The kept windows come back as raw rows too (their days may have been dropped).
    await q.query(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c, stored_at)
       SELECT DISTINCT ON (rig_id, seq) rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c, stored_at
       FROM (SELECT * FROM telemetry_batches_v2 UNION ALL SELECT * FROM telemetry_kept) b ORDER BY rig_id, seq, ts`,
    );
    await q.query(
      `INSERT INTO telemetry_samples (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped)
       SELECT b.rig_id, b.seq, x.socket, x.case_c, x.v_v, x.i_a, (x.flags & 1) <> 0, (x.flags & 2) <> 0
       FROM (SELECT * FROM telemetry_batches_v2 UNION ALL SELECT * FROM telemetry_kept) b
       CROSS JOIN LATERAL unnest(b.socket, b.case_c, b.v_v, b.i_a, b.flags) AS x(socket, case_c, v_v, i_a, flags)
       ON CONFLICT DO NOTHING`,
    );
    await q.query(`INSERT INTO telemetry_rollups SELECT * FROM telemetry_rollups_v2`);
    await q.query(`DROP TABLE "telemetry_kept"`);
    await q.query(`DROP TABLE "telemetry_hourly"`);
    await q.query(`DROP TABLE "telemetry_batches_v2"`);
    await q.query(`DROP TABLE "telemetry_rollups_v2"`);
    await q.query(`DROP FUNCTION telemetry_day_partition(text, date)`);
    await q.query(`DELETE FROM system_counters WHERE name = 'hourly_rolled_at_ms'`);
  }
}

/**
 * Migration 1828… (TelemetryTiers) on a populated database: an empty database is migrated to the
 * migration before it, filled with telemetry in the old form (a row per socket sample, per-minute
 * rollups), then migrated to the head. Every sample must come back through the `telemetry_samples`
 * view with the same values, each message with its sockets in order, the rollups in their day
 * partitions, and the hourly tier summed from the minute rollups (sums computed here in SQL on the
 * old rows before the migration, as the reference). The down migration restores the old form.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { randomBytes } from 'node:crypto';
import { Client } from 'pg';
import { DataSource } from 'typeorm';
import { createDataSource } from '../../server/db/data-source';
import { testDbConfig } from '../support/db';

const DIR = path.resolve(__dirname, '../../server/db/migrations');
const HEAD = '1828000000000-TelemetryTiers.ts';
const name = `tmig_${process.pid}_${randomBytes(3).toString('hex')}`;
const RIG = '0b5f0e2c-6a0d-4c1e-9a57-3f2d8c1b7e44';

async function admin(sql: string): Promise<void> {
  const c = new Client(testDbConfig('postgres'));
  await c.connect();
  try {
    await c.query(sql);
  } finally {
    await c.end();
  }
}

function dataSource(upToHead: boolean): DataSource {
  const base = createDataSource(testDbConfig(name), { runMigrations: false, poolSize: 2 });
  const files = fs
    .readdirSync(DIR)
    // Up to and including HEAD only: a later migration would be the one undoLastMigration takes back.
    .filter((f) => f.endsWith('.ts') && (upToHead ? f <= HEAD : f < HEAD))
    .map((f) => path.join(DIR, f));
  return new DataSource({ ...base.options, migrations: files } as typeof base.options);
}

let ds: DataSource;

beforeAll(async () => {
  await admin(`CREATE DATABASE "${name}"`);
  ds = dataSource(false);
  await ds.initialize();
  await ds.runMigrations({ transaction: 'each' });
});
afterAll(async () => {
  if (ds?.isInitialized) await ds.destroy();
  await admin(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
});

test('old rows become one row per message with socket arrays; rollups move; hours are summed', async () => {
  await ds.query(
    `INSERT INTO rigs (id, code, name, location, socket_count, max_temp_c, max_voltage_v, mqtt_username, mqtt_secret_hash, credentials_issued_at)
     VALUES ($1, 'OV-77', 'Oven OV-77', 'Bay 7', 8, 200, 100, 'rig-ov-77', 'x', now())`,
    [RIG],
  );
  // 3 days of messages every 10 minutes (432), 8 sockets each, sockets inserted out of order.
  await ds.query(
    `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c)
     SELECT $1, g, now() - interval '3 days' + g * interval '10 minutes', g * 600, 125 + (g % 4) * 0.25, NULL, 125
     FROM generate_series(1, 432) g`,
    [RIG],
  );
  await ds.query(
    `INSERT INTO telemetry_samples (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped)
     SELECT $1, g, s, 130 + s + (g % 7) * 0.5, 40 - s, 0.001 * (s + 1), s % 2 = 0, s = 5 AND g > 400
     FROM generate_series(1, 432) g CROSS JOIN (SELECT s FROM generate_series(0, 7) s ORDER BY random()) x`,
    [RIG],
  );
  await ds.query(
    `INSERT INTO telemetry_rollups (rig_id, socket, minute, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
     SELECT b.rig_id, s.socket, date_trunc('minute', b.ts), 1, s.case_c, s.case_c, s.case_c, s.i_a, b.stress_clock_s
     FROM telemetry_batches b JOIN telemetry_samples s ON s.rig_id = b.rig_id AND s.seq = b.seq`,
  );
  const samplesBefore = await ds.query(
    `SELECT seq::int, socket, case_c, v_v, i_a, bias_on, tripped FROM telemetry_samples ORDER BY seq, socket`,
  );
  const hoursBefore = await ds.query(
    `SELECT socket, date_trunc('hour', minute AT TIME ZONE 'UTC') AT TIME ZONE 'UTC' AS hour, sum(n)::int AS n, sum(sum_c) AS sum_c
     FROM telemetry_rollups GROUP BY 1, 2 ORDER BY 1, 2`,
  );
  expect(samplesBefore).toHaveLength(432 * 8);
  await ds.destroy();

  ds = dataSource(true);
  await ds.initialize();
  await ds.runMigrations({ transaction: 'each' });

  const [kind] = await ds.query(`SELECT relkind FROM pg_class WHERE relname = 'telemetry_batches'`);
  expect(kind.relkind).toBe('p'); // partitioned
  expect(Number((await ds.query(`SELECT count(*) AS n FROM telemetry_batches`))[0].n)).toBe(432);
  const [arr] = await ds.query(`SELECT socket, flags FROM telemetry_batches WHERE seq = 401`);
  expect(arr.socket).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
  expect(arr.flags).toEqual([1, 0, 1, 0, 1, 2, 1, 0]); // bit 1 bias on (even sockets), bit 2 tripped (socket 5 after seq 400)
  const samplesAfter = await ds.query(
    `SELECT seq::int, socket, case_c, v_v, i_a, bias_on, tripped FROM telemetry_samples ORDER BY seq, socket`,
  );
  expect(samplesAfter).toEqual(samplesBefore);
  // Every row sits in its UTC day's partition, none in the default one.
  expect(Number((await ds.query(`SELECT count(*) AS n FROM telemetry_batches_default`))[0].n)).toBe(0);
  expect(Number((await ds.query(`SELECT count(*) AS n FROM telemetry_rollups_default`))[0].n)).toBe(0);
  const misplaced = await ds.query(
    `SELECT tableoid::regclass::text AS part, ts FROM telemetry_batches
     WHERE tableoid::regclass::text <> 'telemetry_batches_p' || to_char(ts AT TIME ZONE 'UTC', 'YYYYMMDD')`,
  );
  expect(misplaced).toEqual([]);
  expect(Number((await ds.query(`SELECT count(*) AS n FROM telemetry_rollups`))[0].n)).toBe(432 * 8);
  const hoursAfter = await ds.query(`SELECT socket, hour, n, sum_c FROM telemetry_hourly ORDER BY 1, 2`);
  expect(hoursAfter).toEqual(hoursBefore);

  // Down restores the old tables with the same samples.
  await ds.undoLastMigration({ transaction: 'each' });
  const [kindDown] = await ds.query(`SELECT relkind FROM pg_class WHERE relname = 'telemetry_samples'`);
  expect(kindDown.relkind).toBe('r');
  expect(await ds.query(`SELECT seq::int, socket, case_c, v_v, i_a, bias_on, tripped FROM telemetry_samples ORDER BY seq, socket`)).toEqual(
    samplesBefore,
  );
});

/**
 * Storage (issue #24 item 6, storage half): bytes on disk per tier, a year's projection for a lab
 * of 200 rigs × 64 sockets at 1 Hz with the default windows, and chart reads across the tiers.
 * History is generated in SQL (generate_series), not through MQTT; its stored_at is set to its ts so
 * the API's upkeep does not rebuild its hours while the bench measures.
 *
 *   bytesPerSocketSample.raw        pg_total_relation_size (heap + indexes + TOAST) of a day partition
 *                                   of telemetry_batches holding only the generated rig's messages
 *                                   (one row per message with socket arrays), per socket sample
 *   bytesPerSocketSample.rowPerSample  the same samples in the layout before migration 1828… (a row
 *                                   per sample with its key, plus the message headers with their
 *                                   indexes), in scratch tables dropped afterwards
 *   bytesPerRow.minute / .hour      a day partition of telemetry_rollups (fillfactor 50, as live) and
 *                                   the growth of telemetry_hourly, per row
 *   bytesPerSocketHour              raw: 3,600 samples; minute: 60 rows; hour: 1 row
 *   projectedYear                   200 rigs × 64 sockets (+ the chamber series) at 1 Hz for a year in
 *                                   steady state: raw for rawKeepDays + 1 days (a day is dropped once
 *                                   wholly past the window), minute rollups for minuteKeepDays + 1
 *                                   days, a year of hourly rows, and the kept windows around
 *                                   EMBERLOT_BENCH_EVENTS_PER_RIG_DAY events per rig per day (no overlap
 *                                   assumed: an upper bound); target ≤ 1 TB
 *   chartQueryP95Ms                 GET /api/floor/rigs/BS-01/chart, 300 points, 3 sockets, over
 *                                   30 min (raw), 1 h (minute), 30 d and 1 y (hour); target < 300 ms
 */
import { DEMO_USERS } from '../../server/seed/demo-data';
import { KEEP_AROUND_MIN, MINUTE_KEEP_DAYS, RAW_KEEP_DAYS } from '../../shared/domain/telemetry-tiers';
import type { BenchEnv } from '../lib/environment';
import { getJson, percentile, round, signIn } from '../lib/http';
import { SETTINGS } from '../lib/settings';
import { timeRequests } from './analytics';
import { ROW_PER_SAMPLE_COLUMNS } from './ingest';

const DAY = 86_400_000;
const SOCKETS = 64;
const LAB = { rigs: 200, sockets: 64, hz: 1 };
const TB = 1e12;

export interface StorageResult {
  bytesPerSocketSample: { raw: number; rowPerSample: number; rowPerSampleSamplesOnly: number; denserBy: number };
  bytesPerRow: { rawMessage: number; minute: number; hour: number; kept: number };
  bytesPerSocketHour: { raw: number; minute: number; hour: number };
  projectedYear: {
    lab: string;
    windows: { rawKeepDays: number; minuteKeepDays: number; keepAroundMin: number; eventsPerRigDay: number };
    rawGB: number;
    minuteGB: number;
    hourGB: number;
    keptGB: number;
    totalTB: number;
    rowPerSampleRawGB: number;
    targetTB: number;
    met: boolean;
  };
  chartQueryP95Ms: Record<'30min' | '1h' | '30d' | '1y', number>;
  chartSources: Record<string, string>;
  generated: { messages: number; samples: number; minuteRows: number; hourRows: number; seconds: number };
}

const env = (name: string, d: number) => (process.env[name] ? Number(process.env[name]) : d);

export async function runStorage(b: BenchEnv, log: (l: string) => void): Promise<StorageResult> {
  const messages = env('EMBERLOT_BENCH_STORAGE_MESSAGES', 21_600); // 6 h of one rig at 1 Hz
  const eventsPerRigDay = env('EMBERLOT_BENCH_EVENTS_PER_RIG_DAY', 4);
  const q = async <T = Record<string, string>>(sql: string, params: unknown[] = []) => (await b.pool.query(sql, params)).rows as T[];
  const t0 = Date.now();
  const now = Date.now();
  const today = Math.floor(now / DAY) * DAY;
  const dayD = new Date(today - 5 * DAY); // inside the raw window, a day no other scenario writes
  const dayText = dayD.toISOString().slice(0, 10);
  const suffix = dayText.replace(/-/g, '');
  const [rig] = await q<{ id: string }>(
    `INSERT INTO rigs (code, name, location, socket_count, max_temp_c, max_voltage_v, mqtt_username, mqtt_secret_hash, credentials_issued_at, chamber_c, setpoint_c)
     VALUES ('BS-01', 'Storage bench rig', 'Bench bay S', $1, 200, 100, 'rig-bs-01', 'no-login', now(), 125, 125) RETURNING id`,
    [SOCKETS],
  );
  const rawMessages = (from: Date, count: number) =>
    q(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c, stored_at, socket, case_c, v_v, i_a, flags)
       SELECT $1, $2::bigint + g, $3::timestamptz + g * interval '1 second', g, 125 + 0.4 * sin(g / 97.0), NULL, 125,
              $3::timestamptz + g * interval '1 second',
              ARRAY(SELECT s::smallint FROM generate_series(0, $5::int - 1) s),
              ARRAY(SELECT (131 + s * 0.05 + 1.5 * sin(g / 211.0 + s))::real FROM generate_series(0, $5::int - 1) s),
              ARRAY(SELECT (20 + 0.01 * sin(g + s))::real FROM generate_series(0, $5::int - 1) s),
              ARRAY(SELECT 0.3 + s * 0.0005 + 0.002 * sin(g / 50.0) FROM generate_series(0, $5::int - 1) s),
              array_fill(1::smallint, ARRAY[$5::int])
       FROM generate_series(0, $4::int - 1) g`,
      [rig.id, from.getTime(), from, count, SOCKETS],
    );
  const minuteRows = (from: Date, minutes: number) =>
    q(
      `INSERT INTO telemetry_rollups (rig_id, socket, minute, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
       SELECT $1, s, $2::timestamptz + g * interval '1 minute', 60, 60 * (131 + s * 0.05 + sin(g / 37.0)), 130 + s * 0.05, 133 + s * 0.05, 18, g * 60
       FROM generate_series(0, $3::int - 1) g CROSS JOIN generate_series(-1, $4::int - 1) s
       ON CONFLICT DO NOTHING`,
      [rig.id, from, minutes, SOCKETS],
    );

  // 1. Raw: one rig's messages alone in day D's partition.
  await q(`SELECT telemetry_day_partition('telemetry_batches', $1::date), telemetry_day_partition('telemetry_rollups', $1::date)`, [
    dayText,
  ]);
  await rawMessages(dayD, messages);
  const rawPart = `telemetry_batches_p${suffix}`;
  const [raw] = await q<{ bytes: string; n: string }>(
    `SELECT pg_total_relation_size($1::regclass) AS bytes, (SELECT count(*) FROM ${rawPart}) AS n`,
    [rawPart],
  );
  const samples = Number(raw.n) * SOCKETS;
  const rawPerSample = Number(raw.bytes) / samples;

  // 2. The same samples a row each (the layout before migration 1828…), with the message headers.
  await q(`CREATE TABLE bench_row_per_sample ${ROW_PER_SAMPLE_COLUMNS}`);
  await q(
    `INSERT INTO bench_row_per_sample SELECT b.rig_id, b.seq, s.socket, s.case_c, s.v_v, s.i_a, (s.flags & 1) <> 0, (s.flags & 2) <> 0
     FROM ${rawPart} b CROSS JOIN LATERAL unnest(b.socket, b.case_c, b.v_v, b.i_a, b.flags) AS s(socket, case_c, v_v, i_a, flags)`,
  );
  await q(
    `CREATE TABLE bench_row_headers (rig_id uuid NOT NULL, seq bigint NOT NULL, ts timestamptz NOT NULL, stress_clock_s double precision NOT NULL,
       chamber_c real NOT NULL, humidity_pct real, setpoint_c real NOT NULL, stored_at timestamptz NOT NULL DEFAULT now(), PRIMARY KEY (rig_id, seq))`,
  );
  await q(`CREATE INDEX ON bench_row_headers (rig_id, ts)`);
  await q(`CREATE INDEX ON bench_row_headers (stored_at)`);
  await q(
    `INSERT INTO bench_row_headers SELECT rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c, stored_at FROM ${rawPart}`,
  );
  const [rowForm] = await q<{ samples: string; headers: string }>(
    `SELECT pg_total_relation_size('bench_row_per_sample') AS samples, pg_total_relation_size('bench_row_headers') AS headers`,
  );
  await q(`DROP TABLE bench_row_per_sample, bench_row_headers`);
  const rowPerSample = (Number(rowForm.samples) + Number(rowForm.headers)) / samples;

  // 3. Minute rollups: a whole day D in its own partition.
  await minuteRows(dayD, 1440);
  const minutePart = `telemetry_rollups_p${suffix}`;
  const [minute] = await q<{ bytes: string; n: string }>(
    `SELECT pg_total_relation_size($1::regclass) AS bytes, (SELECT count(*) FROM ${minutePart}) AS n`,
    [minutePart],
  );
  const minutePerRow = Number(minute.bytes) / Number(minute.n);

  // 4. Hourly rollups: 366 days for the chart rig; the table's growth per row.
  const [h0] = await q<{ bytes: string; n: string }>(
    `SELECT pg_total_relation_size('telemetry_hourly') AS bytes, (SELECT count(*) FROM telemetry_hourly) AS n`,
  );
  const hourStart = Math.floor(now / 3_600_000) * 3_600_000;
  await q(
    `INSERT INTO telemetry_hourly (rig_id, socket, hour, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
     SELECT $1, s, $2::timestamptz - g * interval '1 hour', 3600, 3600 * (131 + s * 0.05 + sin(g / 37.0)), 130 + s * 0.05, 133 + s * 0.05, 1080, g * 3600
     FROM generate_series(1, 366 * 24) g CROSS JOIN generate_series(-1, $3::int - 1) s`,
    [rig.id, new Date(hourStart), SOCKETS],
  );
  const [h1] = await q<{ bytes: string; n: string }>(
    `SELECT pg_total_relation_size('telemetry_hourly') AS bytes, (SELECT count(*) FROM telemetry_hourly) AS n`,
  );
  const hourPerRow = (Number(h1.bytes) - Number(h0.bytes)) / (Number(h1.n) - Number(h0.n));

  // 5. Recent history for the short charts: the last hour raw, the last 2 days of minute rollups.
  await rawMessages(new Date(now - 3_600_000), 3600);
  await minuteRows(new Date(Math.floor(now / 60_000) * 60_000 - 2 * DAY), 2 * 1440);
  await q(`UPDATE rigs SET last_seq = (SELECT max(seq) FROM telemetry_batches WHERE rig_id = $1), last_seen_at = now() WHERE id = $1`, [
    rig.id,
  ]);
  await q('ANALYZE telemetry_batches, telemetry_rollups, telemetry_hourly');
  const generatedS = (Date.now() - t0) / 1000;
  log(
    `  generated ${messages + 3600} messages, ${(1440 + 2880) * (SOCKETS + 1)} minute rows, ${366 * 24 * (SOCKETS + 1)} hourly rows in ${generatedS.toFixed(1)} s`,
  );

  // 6. Charts across tiers.
  const mgr = DEMO_USERS.find((u) => u.role === 'manager')!;
  const cookie = await signIn(b.baseUrl, mgr.email, mgr.password);
  const spans = { '30min': 30 * 60_000, '1h': 3_600_000, '30d': 30 * DAY, '1y': 365 * DAY } as const;
  const p95: Record<string, number> = {};
  const sources: Record<string, string> = {};
  for (const [name, ms] of Object.entries(spans)) {
    const url = () =>
      `${b.baseUrl}/api/floor/rigs/BS-01/chart?from=${encodeURIComponent(new Date(now - ms).toISOString())}&to=${encodeURIComponent(new Date(now).toISOString())}&points=300&sockets=0,31,63`;
    const first = await getJson<{ source: string }>(url(), cookie);
    sources[name] = first.body.source;
    p95[name] = round(percentile(await timeRequests(SETTINGS.analytics.requests, url, cookie, SETTINGS.analytics.budgetS), 95), 1);
  }

  // 7. A year of the lab above, steady state, default windows.
  const perMessage = rawPerSample * SOCKETS;
  const series = LAB.sockets + 1; // + the chamber
  const rawB = LAB.rigs * 86_400 * LAB.hz * (RAW_KEEP_DAYS + 1) * perMessage;
  const minuteB = LAB.rigs * series * 1440 * (MINUTE_KEEP_DAYS + 1) * minutePerRow;
  const hourB = LAB.rigs * series * 8760 * hourPerRow;
  const keptB = LAB.rigs * eventsPerRigDay * 365 * (2 * KEEP_AROUND_MIN * 60 * LAB.hz + 1) * perMessage;
  const totalTB = (rawB + minuteB + hourB + keptB) / TB;
  const gb = (x: number) => round(x / 1e9, 1);
  return {
    bytesPerSocketSample: {
      raw: round(rawPerSample, 2),
      rowPerSample: round(rowPerSample, 1),
      rowPerSampleSamplesOnly: round(Number(rowForm.samples) / samples, 1),
      denserBy: round(rowPerSample / rawPerSample, 1),
    },
    bytesPerRow: {
      rawMessage: round(perMessage, 0),
      minute: round(minutePerRow, 1),
      hour: round(hourPerRow, 1),
      kept: round(perMessage, 0),
    },
    bytesPerSocketHour: { raw: round(3600 * rawPerSample, 0), minute: round(60 * minutePerRow, 0), hour: round(hourPerRow, 1) },
    projectedYear: {
      lab: `${LAB.rigs} rigs × ${LAB.sockets} sockets at ${LAB.hz} Hz`,
      windows: { rawKeepDays: RAW_KEEP_DAYS, minuteKeepDays: MINUTE_KEEP_DAYS, keepAroundMin: KEEP_AROUND_MIN, eventsPerRigDay },
      rawGB: gb(rawB),
      minuteGB: gb(minuteB),
      hourGB: gb(hourB),
      keptGB: gb(keptB),
      totalTB: round(totalTB, 3),
      rowPerSampleRawGB: gb(LAB.rigs * 86_400 * LAB.hz * (RAW_KEEP_DAYS + 1) * LAB.sockets * rowPerSample),
      targetTB: 1,
      met: totalTB <= 1,
    },
    chartQueryP95Ms: { '30min': p95['30min'], '1h': p95['1h'], '30d': p95['30d'], '1y': p95['1y'] },
    chartSources: sources,
    generated: {
      messages: messages + 3600,
      samples: (messages + 3600) * SOCKETS,
      minuteRows: (1440 + 2880) * (SOCKETS + 1),
      hourRows: 366 * 24 * (SOCKETS + 1),
      seconds: round(generatedS, 1),
    },
  };
}

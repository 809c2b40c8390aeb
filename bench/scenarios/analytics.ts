/**
 * Analytics: a lab's history at scale, then the two read paths managers and operators wait on.
 *
 * Seed (timed separately, not part of the numbers):
 *   - `lots` lots of `devicesPerLot` devices, each lot on its own finished run with readings at 5
 *     read points (0, 96, 168, 500, 1000 h) — the demo seed's own generator (insertHistoryRun), so
 *     drift, spread, failures and first-failure marks look like real data; lots spread over
 *     `EMBERLOT_BENCH_LOT_TYPES` device types (default 1: every lot is judged against all the
 *     others of its part, the heaviest case for the lot analysis);
 *   - a history rig (BH-01, 64 sockets) with one message every 5 s for 22 h: 16,000 messages,
 *     1.02 M socket samples and their per-minute rollups, written set-wise in SQL with the same
 *     rollup arithmetic as the ingest (n, Σ, min, max, Σ I, last stress clock per rig/socket/minute).
 *     The ingest scenario's rows (millions more) stay in the same tables.
 * Timed (sequential requests after 3 warm-ups each, 40 per path or as many as fit in 30 s but at
 * least 10; p95 by nearest rank):
 *   lotDriftP95Ms   GET /api/analytics/lots/:lotId as manager, lots taken in turn (the part's
 *                   analysis is cached until its data changes, so these are warm reads)
 *   chartQueryP95Ms GET /api/floor/rigs/BH-01/chart over the whole 22 h span, 300 points (rollups)
 *   chartRawP95Ms   the same chart over its last 30 min (raw samples; extra)
 * The lot page's uncached paths (extras, same request, the data touched just before each one):
 *   lotDriftFirstMs          the very first lot request after seeding (nothing cached, server code
 *                            not yet optimised by V8)
 *   lotDriftColdP95Ms        after a no-op UPDATE of one of the lot's measurements: a new row version,
 *                            as an upload makes, so the part's whole analysis is rebuilt (same answer)
 *   lotDriftRunUpdateP95Ms   after a no-op UPDATE of the lot's run, as the run engine's hour accrual
 *                            makes while a run stresses: cached figures, verdicts judged again
 */
import { randomUUID } from 'node:crypto';
import { In } from 'typeorm';
import { DeviceEntity, DeviceTypeEntity, LotEntity, StressPlanEntity, UserEntity } from '../../server/db/entities';
import { DEMO_USERS } from '../../server/seed/demo-data';
import { insertHistoryRun } from '../../server/seed/seed-history';
import type { BenchEnv } from '../lib/environment';
import { getJson, percentile, round, signIn } from '../lib/http';
import { SETTINGS } from '../lib/settings';

export interface AnalyticsResult {
  lots: number;
  devicesPerLot: number;
  readPoints: number;
  lotDriftP95Ms: number;
  chartQueryP95Ms: number;
  [extra: string]: unknown;
}

const READ_POINTS_H = [0, 96, 168, 500, 1000];
const HISTORY_PERIOD_S = 5;
const HISTORY_SOCKETS = 64;
const H = 3600_000;

async function seedLots(b: BenchEnv, lots: number, perLot: number, typeCount: number): Promise<string[]> {
  const m = b.ds.manager;
  const types = (await m.find(DeviceTypeEntity, { order: { partNumber: 'ASC' } }))
    .filter((t) => t.partNumber !== 'HPD-T220N')
    .slice(0, Math.max(1, typeCount));
  const engineer = await m.findOne(UserEntity, { where: { role: 'engineer' } });
  // One 5-read-point plan per type, copied from the type's demo plan.
  const plans = new Map<string, StressPlanEntity>();
  for (const t of types) {
    const base = (await m.find(StressPlanEntity, { where: { deviceTypeId: t.id, current: true }, order: { createdAt: 'ASC' } })).find(
      (p) => !/draft/i.test(p.name),
    );
    if (!base) throw new Error(`no demo plan for ${t.partNumber}`);
    const { id: _id, createdAt: _c, ...rest } = base;
    const plan = await m.save(
      m.create(StressPlanEntity, {
        ...rest,
        planKey: randomUUID(),
        version: 1,
        name: `${base.name} — 5 read points (bench)`,
        readPointsH: READ_POINTS_H,
        durationH: 1000,
        sampleSize: perLot,
        acceptNumber: 0,
      }),
    );
    plans.set(t.id, plan);
  }
  const lotIds: string[] = [];
  const now = Date.now();
  const chunk = 10;
  for (let first = 0; first < lots; first += chunk) {
    await b.ds.transaction(async (tm) => {
      for (let k = first; k < Math.min(lots, first + chunk); k++) {
        const type = types[k % types.length];
        const code = `BL-${String(k + 1).padStart(4, '0')}`;
        const lot = await tm.save(
          tm.create(LotEntity, {
            code,
            deviceTypeId: type.id,
            quantity: 2000,
            dateCode: `26${String(1 + (k % 12)).padStart(2, '0')}`,
            notes: 'Bench lot',
          }),
        );
        const serials = Array.from({ length: perLot }, (_, i) => `S${String(i + 1).padStart(4, '0')}`);
        const ins = await tm.insert(
          DeviceEntity,
          serials.map((serial) => ({ lotId: lot.id, serial })),
        );
        const devices = ins.identifiers.map((idf, i) => ({ id: idf.id as string, lotId: lot.id, serial: serials[i] }) as DeviceEntity);
        // Most lots drift a little; every 9th drifts hard (flagged against its sister lots).
        const hard = k % 9 === 4;
        const drift = { hfeDriftPctPer1000h: hard ? -14 : -1 - (k % 5) * 0.6, leakageGrowthPer1000h: hard ? 3.8 : 1.05 + (k % 4) * 0.08 };
        const failures =
          k % 7 === 3
            ? [
                { serial: 'S0007', atH: 1000, mode: 'leakage' as const },
                { serial: 'S0019', atH: 500, mode: 'gain' as const },
              ]
            : undefined;
        await insertHistoryRun(tm, {
          code: `BR-${String(k + 1).padStart(4, '0')}`,
          plan: plans.get(type.id)!,
          deviceType: type,
          rig: null,
          lots: [{ lot, devices, drift }],
          state: 'finished',
          startedAt: new Date(now - (400 - k) * 24 * H),
          stressHours: 1000,
          measuredH: READ_POINTS_H,
          failures,
          createdById: engineer?.id ?? null,
        });
        lotIds.push(lot.id);
      }
    });
  }
  return lotIds;
}

/** 16,000 messages × 64 sockets one every 5 s, ending now; rollups derived in SQL like the ingest's. */
async function seedHistoryRig(b: BenchEnv, messages: number): Promise<{ code: string; from: Date; to: Date; samples: number }> {
  const code = 'BH-01';
  const to = new Date(Math.floor(Date.now() / 60_000) * 60_000);
  const from = new Date(to.getTime() - messages * HISTORY_PERIOD_S * 1000);
  const client = await b.pool.connect();
  try {
    await client.query('BEGIN');
    const {
      rows: [rig],
    } = await client.query(
      `INSERT INTO rigs (code, name, location, socket_count, max_temp_c, max_voltage_v, mqtt_username, mqtt_secret_hash, credentials_issued_at, last_seq, chamber_c, setpoint_c, last_seen_at)
       VALUES ($1, 'History bench rig', 'Bench bay H', $2, 200, 100, 'rig-bh-01', 'no-login', now(), $3, 125, 125, $4) RETURNING id`,
      [code, HISTORY_SOCKETS, messages, to],
    );
    // One row per message with its sockets as arrays (migration 1828…).
    await client.query(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c, stored_at, socket, case_c, v_v, i_a, flags)
       SELECT $1, g, $2::timestamptz + (g - 1) * make_interval(secs => $3), (g - 1) * $3, 125 + 0.4 * sin(g / 97.0), NULL, 125,
              $2::timestamptz + (g - 1) * make_interval(secs => $3) + interval '150 milliseconds',
              ARRAY(SELECT s::smallint FROM generate_series(0, $5::int - 1) s),
              ARRAY(SELECT (131 + s * 0.05 + 1.5 * sin(g / 211.0 + s) + 0.2 * sin(g * 1.7 + s))::real FROM generate_series(0, $5::int - 1) s),
              array_fill(20::real, ARRAY[$5::int]),
              ARRAY(SELECT 0.3 + s * 0.0005 + 0.002 * sin(g / 50.0) FROM generate_series(0, $5::int - 1) s),
              array_fill(1::smallint, ARRAY[$5::int])
         FROM generate_series(1, $4::int) g`,
      [rig.id, from, HISTORY_PERIOD_S, messages, HISTORY_SOCKETS],
    );
    // Fresh statistics first: without them the planner takes the new rows for a handful.
    await client.query('ANALYZE telemetry_batches');
    await client.query(
      `INSERT INTO telemetry_rollups (rig_id, socket, minute, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
       SELECT b.rig_id, s.socket, date_trunc('minute', b.ts), count(*), sum(s.case_c), min(s.case_c), max(s.case_c), sum(s.i_a), max(b.stress_clock_s)
         FROM telemetry_batches b CROSS JOIN LATERAL unnest(b.socket, b.case_c, b.i_a) AS s(socket, case_c, i_a)
        WHERE b.rig_id = $1 GROUP BY 1, 2, 3
       UNION ALL
       SELECT b.rig_id, -1, date_trunc('minute', b.ts), count(*), sum(b.chamber_c), min(b.chamber_c), max(b.chamber_c), 0, max(b.stress_clock_s)
         FROM telemetry_batches b WHERE b.rig_id = $1 GROUP BY 1, 2, 3`,
      [rig.id],
    );
    await client.query(
      `INSERT INTO telemetry_hourly (rig_id, socket, hour, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
       SELECT rig_id, socket, date_trunc('hour', minute), sum(n), sum(sum_c), min(min_c), max(max_c), sum(sum_ia), max(stress_clock_s)
         FROM telemetry_rollups WHERE rig_id = $1 GROUP BY 1, 2, 3`,
      [rig.id],
    );
    await client.query('COMMIT');
    await client.query('ANALYZE telemetry_rollups');
  } catch (e) {
    await client.query('ROLLBACK').catch(() => undefined);
    throw e;
  } finally {
    client.release();
  }
  return { code, from, to: new Date(to.getTime() + 1000), samples: messages * HISTORY_SOCKETS };
}

/**
 * Sequential timed GETs, each right after `touch(k)` (untimed) changes what the request reads: `n`
 * of them, or fewer (at least 10) when they take over `budgetS`.
 */
async function timeAfterTouch(
  n: number,
  touch: (k: number) => Promise<unknown>,
  url: (k: number) => string,
  cookie: string,
  budgetS: number,
): Promise<number[]> {
  const ms: number[] = [];
  const until = Date.now() + budgetS * 1000;
  for (let k = 0; k < n && (k < 10 || Date.now() < until); k++) {
    await touch(k);
    ms.push((await getJson(url(k), cookie)).ms);
  }
  return ms;
}

/** Sequential timed GETs after 3 warm-ups: `n` of them, or fewer (at least 10) when they take over `budgetS`. */
export async function timeRequests(n: number, url: (k: number) => string, cookie: string, budgetS: number): Promise<number[]> {
  for (let k = 0; k < 3; k++) await getJson(url(k), cookie);
  const ms: number[] = [];
  const until = Date.now() + budgetS * 1000;
  for (let k = 0; k < n && (k < 10 || Date.now() < until); k++) ms.push((await getJson(url(k + 3), cookie)).ms);
  return ms;
}

export async function runAnalytics(b: BenchEnv, log: (l: string) => void): Promise<AnalyticsResult> {
  const a = SETTINGS.analytics;
  const typeCount = Number(process.env.EMBERLOT_BENCH_LOT_TYPES ?? 1);
  let t = Date.now();
  const lotIds = await seedLots(b, a.lots, a.devicesPerLot, typeCount);
  const seedLotsS = (Date.now() - t) / 1000;
  t = Date.now();
  const hist = await seedHistoryRig(b, a.historyMessages);
  const seedHistoryS = (Date.now() - t) / 1000;
  const counts = (
    await b.pool.query(
      `SELECT (SELECT count(*) FROM measurements m JOIN devices d ON d.id = m.device_id JOIN lots l ON l.id = d.lot_id WHERE l.code LIKE 'BL-%') AS readings,
              (SELECT count(*) FROM telemetry_samples) AS samples, (SELECT count(*) FROM telemetry_rollups) AS rollups`,
    )
  ).rows[0];
  log(
    `  seeded ${a.lots} lots (${counts.readings} readings) in ${seedLotsS.toFixed(1)} s, history rig ${hist.samples} samples in ${seedHistoryS.toFixed(1)} s; telemetry_samples holds ${counts.samples} rows`,
  );

  const mgr = DEMO_USERS.find((u) => u.role === 'manager')!;
  const cookie = await signIn(b.baseUrl, mgr.email, mgr.password);
  const lotUrl = (k: number) => `${b.baseUrl}/api/analytics/lots/${lotIds[k % lotIds.length]}`;
  const first = await getJson(lotUrl(0), cookie);
  const drift = await timeRequests(a.requests, lotUrl, cookie, a.budgetS);
  // Values rewritten unchanged: the analysis answers the same, but the rows have new versions.
  const touchMeasurement = (k: number) =>
    b.pool.query(
      `UPDATE measurements SET hfe = hfe WHERE id = (SELECT m.id FROM measurements m JOIN devices d ON d.id = m.device_id WHERE d.lot_id = $1 LIMIT 1)`,
      [lotIds[k % lotIds.length]],
    );
  const touchRun = (k: number) =>
    b.pool.query(`UPDATE runs SET stress_hours = stress_hours WHERE id IN (SELECT run_id FROM run_lots WHERE lot_id = $1)`, [
      lotIds[k % lotIds.length],
    ]);
  const cold = await timeAfterTouch(Math.min(a.requests, 20), touchMeasurement, lotUrl, cookie, a.budgetS);
  const runUpdate = await timeAfterTouch(Math.min(a.requests, 20), touchRun, lotUrl, cookie, a.budgetS);
  const span = `from=${encodeURIComponent(hist.from.toISOString())}&to=${encodeURIComponent(hist.to.toISOString())}&points=300`;
  const chartUrl = `${b.baseUrl}/api/floor/rigs/${hist.code}/chart?${span}`;
  const sample = await getJson<{ source: string; chamber: unknown[]; sockets: Array<{ points: unknown[] }> }>(chartUrl, cookie);
  const chart = await timeRequests(a.requests, () => chartUrl, cookie, a.budgetS);
  const rawFrom = new Date(hist.to.getTime() - 30 * 60_000);
  const rawUrl = `${b.baseUrl}/api/floor/rigs/${hist.code}/chart?from=${encodeURIComponent(rawFrom.toISOString())}&to=${encodeURIComponent(hist.to.toISOString())}&points=300`;
  const raw = await timeRequests(a.requests, () => rawUrl, cookie, a.budgetS);
  const lotTypes = (await b.ds.getRepository(LotEntity).find({ where: { id: In(lotIds) } })).reduce(
    (s, l) => s.add(l.deviceTypeId),
    new Set<string>(),
  ).size;
  return {
    lots: lotIds.length,
    devicesPerLot: a.devicesPerLot,
    readPoints: READ_POINTS_H.length,
    lotDriftP95Ms: round(percentile(drift, 95), 1),
    chartQueryP95Ms: round(percentile(chart, 95), 1),
    lotDriftP50Ms: round(percentile(drift, 50), 1),
    chartQueryP50Ms: round(percentile(chart, 50), 1),
    chartRawP95Ms: round(percentile(raw, 95), 1),
    lotDriftRequests: drift.length,
    lotDriftFirstMs: round(first.ms, 1),
    lotDriftColdP95Ms: round(percentile(cold, 95), 1),
    lotDriftColdP50Ms: round(percentile(cold, 50), 1),
    lotDriftColdRequests: cold.length,
    lotDriftRunUpdateP95Ms: round(percentile(runUpdate, 95), 1),
    lotDriftRunUpdateP50Ms: round(percentile(runUpdate, 50), 1),
    chartRequests: chart.length,
    lotDeviceTypes: lotTypes,
    readings: Number(counts.readings),
    telemetrySamples: Number(counts.samples),
    historyRigSamples: hist.samples,
    chartSpanHours: round((hist.to.getTime() - hist.from.getTime()) / H, 1),
    chartSource: sample.body.source,
    chartPointsPerSeries: sample.body.chamber.length,
    seedSeconds: round(seedLotsS + seedHistoryS, 1),
  };
}

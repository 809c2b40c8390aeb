/**
 * Telemetry tiers on real PostgreSQL (migration 1828…, server/modules/telemetry/upkeep.ts,
 * shared/domain/telemetry-tiers.ts): day partitions made ahead and for late rows, a raw day past
 * its window dropped as a partition with the windows around an alarm and a read point kept, minute
 * rollups outliving the raw day and hourly rollups outliving both; the chart API choosing its tier
 * by span. The upkeep runs with a clock moved ahead (its `now`), so nothing waits for days.
 * Reference values are counted and summed here from the messages the test writes (the chamber
 * values are exact in binary, so the stored `real` sums compare exactly).
 */
import { randomUUID } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { telemetryFromReadings, type Telemetry } from '../../shared/mqtt';
import { AlarmEntity, DeviceEntity, DeviceTypeEntity, LotEntity, RigEntity, StressPlanEntity } from '../../server/db/entities';
import { writeBatch, type IngestItem } from '../../server/modules/telemetry/ingest-store';
import { RollupAccumulator } from '../../server/modules/telemetry/rollups';
import { pgPoolOf } from '../../server/modules/telemetry/telemetry.feature';
import { runTelemetryUpkeep, type UpkeepOptions } from '../../server/modules/telemetry/upkeep';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { createTestApp, type TestApp } from '../support/api';

const DAY = 86_400_000;
const MIN = 60_000;
const KEEP: UpkeepOptions = { rawKeepDays: 14, minuteKeepDays: 30, keepAroundMin: 10 };
let t: TestApp;
let rigId = '';
let runId = '';
const NOW = Date.now();
/** One message every 30 s for the three hours before NOW. */
const TIMES = Array.from({ length: 360 }, (_, k) => NOW - 3 * 3600_000 + (k + 1) * 30_000);
const chamberOf = (seq: number) => 125 + (seq % 4) * 0.25;

const dayName = (parent: string, ms: number) => `${parent}_p${new Date(ms).toISOString().slice(0, 10).replace(/-/g, '')}`;
const q = <T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> => t.ctx.ds.query(sql, params);
const num = async (sql: string, params: unknown[] = []) => Number((await q<{ n: string | number | null }>(sql, params))[0].n ?? 0);

function message(seq: number, atMs: number): Telemetry {
  return telemetryFromReadings({
    v: 1,
    rig: 'OV-91',
    seq,
    ts: new Date(atMs).toISOString(),
    stressClockS: seq * 30,
    chamberC: chamberOf(seq),
    humidityPct: null,
    setpointC: 125,
    sockets: [0, 1, 2, 3].map((i) => ({ i, caseC: 130 + i, vV: 40, iA: 0.25, biasOn: true, tripped: false })),
  });
}

/** Store messages as the ingest does (one transaction), rollups included. */
async function store(msgs: Telemetry[]): Promise<void> {
  const acc = new RollupAccumulator();
  const items: IngestItem[] = msgs.map((msg) => ({ kind: 'telemetry', rigCode: 'OV-91', msg, receivedAt: new Date() }));
  const r = await writeBatch(pgPoolOf(t.ctx), items);
  acc.add(r.landed);
  await writeBatch(pgPoolOf(t.ctx), [], { rollups: acc.take() });
}

async function fixtures(m: EntityManager): Promise<void> {
  const type = await m.save(
    m.create(DeviceTypeEntity, {
      partNumber: 'HPD-T220N',
      polarity: 'NPN',
      bvcboV: 200,
      bvceoV: 120,
      bveboV: 6,
      icMaxA: 3,
      pMaxW: 40,
      tjMaxC: 150,
      thetaJcCPerW: 1.5,
      thetaJaCPerW: 60,
      betaRef: 80,
      betaRefIcA: 0.5,
      betaRefTC: 25,
      xtb: 1.5,
      icboRefA: 10e-9,
    }),
  );
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'Powered life 125 °C',
      kind: 'hotl',
      deviceTypeId: type.id,
      chamberC: 125,
      humidityPct: null,
      bias: { vcbV: null, vebV: null, vceV: 40, ibA: 0.002, icA: null, tolerancePct: 5 },
      durationH: 1000,
      readPointsH: [0, 168, 500, 1000],
      sampleSize: 4,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
      eaEv: 0.7,
      useC: 55,
    }),
  );
  const rig = await m.save(
    m.create(RigEntity, {
      code: 'OV-91',
      name: 'Oven OV-91',
      socketCount: 4,
      maxTempC: 200,
      maxVoltageV: 100,
      mqttUsername: 'rig-ov-91',
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
    }),
  );
  rigId = rig.id;
  const lot = await m.save(m.create(LotEntity, { code: 'HPD-L9191', deviceTypeId: type.id, quantity: 4 }));
  const devices = await m.save(
    Array.from({ length: 4 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `HPD-L9191-${String(i + 1).padStart(3, '0')}` })),
  );
  const run = await insertHistoryRun(m, {
    code: 'HTOL-T-91',
    plan,
    deviceType: type,
    rig,
    lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
    state: 'stressing',
    startedAt: new Date(NOW - 200 * 3600_000),
    stressHours: 150,
    measuredH: [],
    noise: 0,
  });
  runId = run.id;
}

beforeAll(async () => {
  t = await createTestApp();
  await t.ctx.ds.transaction((m) => fixtures(m));
});
afterAll(async () => t?.close());

describe('telemetry partitions and tiers', () => {
  it('makes day partitions from yesterday to three days ahead, and moves a late day out of the default partition', async () => {
    const late = NOW - 10 * DAY; // no partition for that day yet: it lands in the default one
    await store([message(1_000_000, late)]);
    expect(await num(`SELECT count(*) AS n FROM telemetry_batches_default WHERE rig_id = $1`, [rigId])).toBe(1);
    const r = await runTelemetryUpkeep(pgPoolOf(t.ctx), KEEP, new Date(NOW));
    expect(r.created).toContain(dayName('telemetry_batches', late));
    for (const d of [-1, 0, 1, 2, 3]) {
      const [row] = await q<{ reg: string | null }>(`SELECT to_regclass($1)::text AS reg`, [dayName('telemetry_batches', NOW + d * DAY)]);
      expect(row.reg).toBe(dayName('telemetry_batches', NOW + d * DAY));
    }
    expect(await num(`SELECT count(*) AS n FROM telemetry_batches_default`)).toBe(0);
    expect(await num(`SELECT count(*) AS n FROM ${dayName('telemetry_batches', late)} WHERE rig_id = $1`, [rigId])).toBe(1);
    // Still one message of the rig's, readable per socket through the view.
    expect(await num(`SELECT count(*) AS n FROM telemetry_samples WHERE rig_id = $1 AND seq = 1000000`, [rigId])).toBe(4);
  });

  it('drops a raw day past its window as a partition, keeping the windows around an alarm and a read point; rollups survive', async () => {
    await store(TIMES.map((ts, k) => message(k + 1, ts)));
    const alarmAt = NOW - 2 * 3600_000;
    const [alarm] = await t.ctx.ds.getRepository(AlarmEntity).save([
      t.ctx.ds.getRepository(AlarmEntity).create({
        kind: 'runaway-trip',
        severity: 'critical',
        rigId,
        socketIndex: 2,
        title: 'Socket tripped',
        message: 'Socket 2 tripped: case above the runaway limit',
        dedupeKey: `runaway-trip:${rigId}:2`,
      }),
    ]);
    await q(`UPDATE alarms SET raised_at = $2 WHERE id = $1`, [alarm.id, new Date(alarmAt)]);
    await t.ctx.audit.record({ actor: 'system', action: 'run.read-point', entity: 'run', entityId: runId, details: { hours: 168 } });
    const [rp] = await q<{ at: Date }>(`SELECT at FROM audit_log WHERE action = 'run.read-point' AND entity_id = $1`, [runId]);
    const around = (at: number) => (ts: number) => ts >= at - 10 * MIN && ts <= at + 10 * MIN;
    const expectKept = TIMES.filter((ts) => around(alarmAt)(ts) || around(rp.at.getTime())(ts)).length;
    expect(expectKept).toBeGreaterThan(40); // ~41 around the alarm, ~20 before the read point

    const chamberSum = TIMES.reduce((s, _, k) => s + chamberOf(k + 1), 0);
    const days = new Set(TIMES.map((ts) => dayName('telemetry_batches', ts)));
    const later = new Date(NOW + 20 * DAY); // raw window (14 d) passed, minute window (30 d) not
    const r = await runTelemetryUpkeep(pgPoolOf(t.ctx), KEEP, later);
    for (const d of days) expect(r.dropped).toContain(d);
    for (const d of days) expect((await q<{ reg: string | null }>(`SELECT to_regclass($1)::text AS reg`, [d]))[0].reg).toBeNull();
    expect(await num(`SELECT count(*) AS n FROM telemetry_batches WHERE rig_id = $1 AND seq <= 360`, [rigId])).toBe(0);
    expect(r.kept).toBe(expectKept);
    const kept = await q<{ ts: Date; n: number }>(
      `SELECT ts, cardinality(socket) AS n FROM telemetry_kept WHERE rig_id = $1 AND seq <= 360 ORDER BY ts`,
      [rigId],
    );
    expect(kept).toHaveLength(expectKept);
    for (const k of kept) {
      expect(around(alarmAt)(k.ts.getTime()) || around(rp.at.getTime())(k.ts.getTime())).toBe(true);
      expect(k.n).toBe(4); // the message whole, every socket
    }
    // Minute and hourly rollups of the dropped days are all there.
    const minuteSql = `SELECT sum(n) AS n FROM telemetry_rollups WHERE rig_id = $1 AND socket = -1 AND minute > $2`;
    expect(await num(minuteSql, [rigId, new Date(NOW - 4 * 3600_000)])).toBe(360);
    expect(
      await num(`SELECT sum(sum_c) AS n FROM telemetry_rollups WHERE rig_id = $1 AND socket = -1 AND minute > $2`, [
        rigId,
        new Date(NOW - 4 * 3600_000),
      ]),
    ).toBe(chamberSum);
    const hourlySql = `SELECT sum(n) AS n FROM telemetry_hourly WHERE rig_id = $1 AND socket = -1 AND hour > $2`;
    expect(await num(hourlySql, [rigId, new Date(NOW - 5 * 3600_000)])).toBe(360);
    expect(
      await num(`SELECT sum(n) AS n FROM telemetry_hourly WHERE rig_id = $1 AND socket = 2 AND hour > $2`, [
        rigId,
        new Date(NOW - 5 * 3600_000),
      ]),
    ).toBe(360);

    // Past the minute window too: the minute days go, the hourly tier stays (kept for good).
    const much = await runTelemetryUpkeep(pgPoolOf(t.ctx), KEEP, new Date(NOW + 40 * DAY));
    for (const ts of TIMES) expect(much.dropped).toContain(dayName('telemetry_rollups', ts));
    expect(await num(minuteSql, [rigId, new Date(NOW - 4 * 3600_000)])).toBe(0);
    expect(await num(hourlySql, [rigId, new Date(NOW - 5 * 3600_000)])).toBe(360);
    expect(
      await num(`SELECT sum(sum_c) AS n FROM telemetry_hourly WHERE rig_id = $1 AND socket = -1 AND hour > $2`, [
        rigId,
        new Date(NOW - 5 * 3600_000),
      ]),
    ).toBe(chamberSum);
    expect(await num(`SELECT count(*) AS n FROM telemetry_kept WHERE rig_id = $1 AND seq <= 360`, [rigId])).toBe(expectKept);
  });
});

describe('GET /api/floor/rigs/:code/chart across tiers', () => {
  const url = (from: number, to: number) =>
    `/api/floor/rigs/OV-91/chart?from=${encodeURIComponent(new Date(from).toISOString())}&to=${encodeURIComponent(new Date(to).toISOString())}&points=30&sockets=5`;
  const hourStart = Math.floor(NOW / 3600_000) * 3600_000;

  beforeAll(async () => {
    // 400 days of hourly rows for socket 5 (no message above has it) and the chamber: avg 100 + day number.
    await q(
      `INSERT INTO telemetry_hourly (rig_id, socket, hour, n, sum_c, min_c, max_c, sum_ia, stress_clock_s)
       SELECT $1, s, $2::timestamptz - g * interval '1 hour', 120, 120 * (100 + g / 24), 99, 140, 30, 0
       FROM generate_series(1, 400 * 24) g CROSS JOIN (VALUES (-1::smallint), (5::smallint)) v(s)
       ON CONFLICT DO NOTHING`,
      [rigId, new Date(hourStart)],
    );
  });

  it('reads raw up to 30 minutes, minute rollups up to 2 days, hourly rollups beyond, and says which', async () => {
    const agent = await t.signIn('operator');
    const cases: Array<[number, number, string]> = [
      [NOW - 30 * MIN, NOW, 'raw'],
      [NOW - 30 * MIN - 1, NOW, 'minute'],
      [NOW - 2 * DAY, NOW, 'minute'],
      [NOW - 2 * DAY - 1, NOW, 'hour'],
      [NOW - 30 * DAY, NOW, 'hour'],
      [NOW - 366 * DAY, NOW, 'hour'],
      // A short span older than the raw window reads the minute tier; older than the minute window, the hourly one.
      [NOW - 20 * DAY, NOW - 20 * DAY + 10 * MIN, 'minute'],
      [NOW - 40 * DAY, NOW - 40 * DAY + 10 * MIN, 'hour'],
    ];
    for (const [from, to, tier] of cases) {
      const res = await agent.get(url(from, to));
      expect([res.status, res.body.source, from - NOW]).toEqual([200, tier, from - NOW]);
    }
  });

  it('a 30-day chart averages the hourly rows of each bucket (n-weighted)', async () => {
    const agent = await t.signIn('operator');
    const to = hourStart - 24 * 3600_000; // buckets of exactly 24 hourly rows: g = 24…743
    const from = to - 30 * DAY;
    const res = await agent.get(url(from, to));
    expect(res.body.source).toBe('hour');
    expect(res.body.bucketMs).toBe(DAY);
    const pts = res.body.sockets[0].points as Array<{ t: string; avg: number; min: number; max: number }>;
    expect(pts).toHaveLength(30);
    // Bucket k holds the 24 hours hourStart − g h, g = 24·(30−k)+1 … 24·(31−k); a row's avg is 100 + ⌊g / 24⌋ (integer division).
    const expected = (k: number) => {
      const gs = Array.from({ length: 24 }, (_, j) => 24 * (31 - k) - j).filter((g) => hourStart - g * 3600_000 >= from);
      return gs.reduce((s, g) => s + (100 + Math.floor(g / 24)), 0) / gs.length;
    };
    pts.forEach((p, k) => expect([k, p.avg, p.min, p.max]).toEqual([k, Math.round(expected(k) * 100) / 100, 99, 140]));
  });

  it('a short span older than the raw window reads the raw messages kept around an alarm (telemetry_kept), and says so', async () => {
    // The kept messages of the test above (around the alarm and the read point), copied 20 days back
    // (new seq), as the upkeep leaves them once their day is dropped: the chart's `now` is the real clock.
    const SHIFT = 20 * DAY;
    await t.ctx.ds.transaction(async (m) => {
      await m.query(`CREATE TEMP TABLE kept_copy ON COMMIT DROP AS SELECT * FROM telemetry_kept WHERE rig_id = $1 AND seq <= 360`, [rigId]);
      await m.query(`UPDATE kept_copy SET ts = ts - $1 * interval '1 millisecond', seq = seq + 5000000`, [SHIFT]);
      await m.query(`INSERT INTO telemetry_kept SELECT * FROM kept_copy`);
    });
    const keptTimes = (
      await q<{ ts: Date; seq: string }>(`SELECT ts, seq FROM telemetry_kept WHERE rig_id = $1 AND seq > 5000000 ORDER BY ts`, [rigId])
    ).map((r) => ({ ms: r.ts.getTime(), seq: Number(r.seq) - 5000000 }));
    const alarmAt = NOW - 2 * 3600_000 - SHIFT;
    const from = alarmAt - 10 * MIN;
    const to = alarmAt + 10 * MIN;
    const agent = await t.signIn('operator');
    const res = await agent.get(
      `/api/floor/rigs/OV-91/chart?from=${encodeURIComponent(new Date(from).toISOString())}&to=${encodeURIComponent(new Date(to).toISOString())}&points=20&sockets=2`,
    );
    expect(res.status).toBe(200);
    expect([res.body.source, res.body.keptRaw]).toEqual(['raw', true]);
    // Reference: the written messages in the window, bucketed by minute here (chamber exact in binary; socket 2 reads 132 °C).
    const bucketMs = (to - from) / 20;
    const inWindow = keptTimes.filter((k) => k.ms >= from && k.ms < to);
    expect(inWindow.length).toBeGreaterThan(30);
    const buckets = new Map<number, number[]>();
    for (const k of inWindow) {
      const b = Math.min(Math.floor((k.ms - from) / bucketMs), 19);
      buckets.set(b, [...(buckets.get(b) ?? []), chamberOf(k.seq)]);
    }
    const expected = [...buckets.entries()]
      .sort((a, b) => a[0] - b[0])
      .map(([b, v]) => ({
        t: new Date(from + (b + 0.5) * bucketMs).toISOString(),
        avg: Math.round((v.reduce((x, y) => x + y, 0) / v.length) * 100) / 100,
        min: Math.min(...v),
        max: Math.max(...v),
      }));
    expect(res.body.chamber).toEqual(expected);
    expect(res.body.sockets[0].points.map((p: { avg: number }) => p.avg)).toEqual(expected.map(() => 132));
    // The same span on a stretch with nothing kept still reads the minute tier.
    const quiet = await agent.get(
      `/api/floor/rigs/OV-91/chart?from=${encodeURIComponent(new Date(alarmAt - 60 * MIN).toISOString())}&to=${encodeURIComponent(new Date(alarmAt - 40 * MIN).toISOString())}&points=20&sockets=2`,
    );
    expect([quiet.body.source, quiet.body.keptRaw]).toEqual(['minute', false]);
  });

  it('refuses a span over a year', async () => {
    const agent = await t.signIn('operator');
    const res = await agent.get(url(NOW - 367 * DAY, NOW));
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).toContain('366 days');
  });
});

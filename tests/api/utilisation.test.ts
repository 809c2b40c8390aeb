/**
 * /api/utilisation: socket-hours per rig and week from stored runs, sockets and trips, the median
 * request-to-verdict time from bookings and verdict signatures, the CSV export, and who may read
 * them. The figures are worked by hand in the comments (definitions in shared/scheduling/utilisation.ts).
 */
import {
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunLotEntity,
  RunSocketEntity,
  StressPlanEntity,
  VerdictSignatureEntity,
} from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { WEEK_MS, weekStartMs } from '../../shared/scheduling/utilisation';
import { createTestApp, type TestApp } from '../support/api';
import { randomUUID } from 'node:crypto';

let t: TestApp;
const H = 3_600_000;
const THIS_WEEK = weekStartMs(Date.now());
const LAST_WEEK = THIS_WEEK - WEEK_MS;

beforeAll(async () => {
  // A real-time stress clock: socket-hours are wall hours.
  t = await createTestApp({ clockRate: 1 / 3600 });
  const m = t.ctx.ds.manager;
  const rig = await m.save(
    m.create(RigEntity, {
      code: 'OV-31',
      name: 'Oven 31',
      socketCount: 8,
      maxTempC: 200,
      maxVoltageV: 800,
      mqttUsername: 'rig-ov-31',
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
    }),
  );
  await m.save(
    m.create(RigEntity, {
      code: 'OV-32',
      name: 'Oven 32',
      socketCount: 8,
      maxTempC: 200,
      maxVoltageV: 800,
      mqttUsername: 'rig-ov-32',
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
    }),
  );
  const type = await m.save(
    m.create(
      DeviceTypeEntity,
      DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140')!,
    ),
  );
  const plan = await m.save(
    m.create(StressPlanEntity, {
      planKey: randomUUID(),
      version: 1,
      name: 'HTRB 125 °C, 10 h',
      kind: 'htrb',
      deviceTypeId: type.id,
      chamberC: 125,
      humidityPct: null,
      bias: { vcbV: 80, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
      durationH: 10,
      readPointsH: [0, 10],
      sampleSize: 4,
      acceptNumber: 0,
      criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
    }),
  );
  // Lot A: a finished run on OV-31, last Monday 00:00–10:00, 4 sockets; socket 3 tripped at 5 h.
  // It has no recorded state changes, so it counts as stressing from start to finish.
  const lots: LotEntity[] = [];
  for (const code of ['HG2901-A', 'HG2902-B']) lots.push(await m.save(m.create(LotEntity, { code, deviceTypeId: type.id, quantity: 50 })));
  const devices = await m.save(['A1', 'A2', 'A3', 'A4'].map((serial) => m.create(DeviceEntity, { lotId: lots[0].id, serial })));
  const run = await m.save(
    m.create(RunEntity, {
      code: 'HTRB-2901-A',
      planId: plan.id,
      rigId: rig.id,
      state: 'finished',
      sampleSize: 4,
      stateChangedAt: new Date(LAST_WEEK + 10 * H),
      scheduledStart: new Date(LAST_WEEK),
      scheduledEnd: new Date(LAST_WEEK + 12 * H),
      startedAt: new Date(LAST_WEEK),
      finishedAt: new Date(LAST_WEEK + 10 * H),
      stressHours: 10,
    }),
  );
  // Credited: three sockets 8 h each (2 h of heating earned nothing), the tripped one 5 h → 29 socket-h.
  await m.insert(
    RunSocketEntity,
    devices.map((d, i) => ({
      runId: run.id,
      deviceId: d.id,
      socketIndex: i,
      accruedHours: i === 3 ? 5 : 8,
      tripped: i === 3,
      trippedAt: i === 3 ? new Date(LAST_WEEK + 5 * H) : null,
    })),
  );
  await m.insert(RunLotEntity, { runId: run.id, lotId: lots[0].id });
  // Lot B: booked on OV-32 and aborted before it started (no socket-hours; its request still counts).
  const runB = await m.save(
    m.create(RunEntity, {
      code: 'HTRB-2902-B',
      planId: plan.id,
      rigId: null,
      state: 'aborted',
      sampleSize: 4,
      stateChangedAt: new Date(LAST_WEEK),
    }),
  );
  await m.insert(RunLotEntity, { runId: runB.id, lotId: lots[1].id });
  // Requests: lot A booked 2 days before last Monday, lot B 1 day before.
  await t.ctx.ds.query(`UPDATE runs SET created_at = $2 WHERE id = $1`, [run.id, new Date(LAST_WEEK - 48 * H)]);
  await t.ctx.ds.query(`UPDATE runs SET created_at = $2 WHERE id = $1`, [runB.id, new Date(LAST_WEEK - 24 * H)]);
  // Verdicts: lot A signed last Monday 20:00 (68 h after its request; a second signature later does
  // not count), lot B last Monday 12:00 (36 h).
  const sign = (lotId: string, at: number) =>
    m.insert(VerdictSignatureEntity, {
      lotId,
      verdict: 'passed',
      meaning: 'approved',
      signerId: randomUUID(),
      signerName: 'Test manager',
      signerEmail: 'manager@test.example',
      signedAt: new Date(at),
      dataHash: '0'.repeat(64),
      data: '{}',
    });
  await sign(lots[0].id, LAST_WEEK + 20 * H);
  await sign(lots[0].id, LAST_WEEK + 30 * H);
  await sign(lots[1].id, LAST_WEEK + 12 * H);
});

afterAll(async () => {
  await t?.close();
});

describe('GET /api/utilisation', () => {
  it('gives socket-hours per rig and week that add up, and the median turnaround', async () => {
    const res = await (await t.signIn('manager')).get('/api/utilisation?weeks=2');
    expect(res.status).toBe(200);
    expect(res.body.weeks).toEqual([new Date(LAST_WEEK).toISOString(), new Date(THIS_WEEK).toISOString()]);
    expect(res.body.rigs).toEqual(['OV-31', 'OV-32']);
    const row = (rig: string, week: number) =>
      res.body.rows.find((r: { rigCode: string; weekStart: string }) => r.rigCode === rig && r.weekStart === new Date(week).toISOString());
    // booked 4 × 10 = 40; lost: the tripped socket 5 → 10 h = 5; stressed: the 29 credited; idle 40 − 29 − 5 = 6
    expect(row('OV-31', LAST_WEEK)).toEqual({
      rigCode: 'OV-31',
      weekStart: new Date(LAST_WEEK).toISOString(),
      bookedSh: 40,
      stressedSh: 29,
      idleSh: 6,
      lostSh: 5,
    });
    for (const [rig, week] of [
      ['OV-31', THIS_WEEK],
      ['OV-32', LAST_WEEK],
      ['OV-32', THIS_WEEK],
    ] as const) {
      expect(row(rig, week)).toMatchObject({ bookedSh: 0, stressedSh: 0, idleSh: 0, lostSh: 0 });
    }
    for (const r of res.body.rows) expect(r.bookedSh).toBeCloseTo(r.stressedSh + r.idleSh + r.lostSh, 9);
    // Turnaround: lot A 68 h, lot B 36 h → median (68 + 36) / 2 = 52 h
    expect(res.body.turnaround.lots.map((l: { lotCode: string; hours: number }) => [l.lotCode, l.hours])).toEqual([
      ['HG2902-B', 36],
      ['HG2901-A', 68],
    ]);
    expect(res.body.turnaround.medianH).toBe(52);
    expect(Object.keys(res.body.definitions)).toEqual(['booked', 'stressed', 'lost', 'idle', 'turnaround', 'hours']);
  });

  it('exports the same figures as CSV', async () => {
    const res = await (await t.signIn('manager')).get('/api/utilisation/export.csv?weeks=2');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('text/csv; charset=utf-8');
    const lines = res.text.split('\r\n');
    expect(lines[0]).toBe('Rig,Week starting (UTC),Booked socket-h,Stressed socket-h,Idle socket-h,Lost to faults socket-h');
    expect(lines).toContain(`OV-31,${new Date(LAST_WEEK).toISOString().slice(0, 10)},40,29,6,5`);
    expect(lines).toContain('Median request-to-verdict (h),52');
  });

  it('refuses bad input and roles without the right', async () => {
    const mgr = await t.signIn('manager');
    const bad = await mgr.get('/api/utilisation?weeks=0');
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.weeks).toEqual(['At least 1 week']);
    expect((await mgr.get('/api/utilisation?week=2')).status).toBe(400);
    const op = await t.signIn('operator');
    expect((await op.get('/api/utilisation')).status).toBe(403);
    expect((await op.get('/api/utilisation/export.csv')).status).toBe(403);
  });
});

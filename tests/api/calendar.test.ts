/**
 * The calendar: run requests with a due date and a priority, and proposals that booking accepts
 * (one sharing rule for both, shared/scheduling/sharing.ts).
 */
import { RigEntity, RunEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
let clock = Date.UTC(2026, 11, 1, 8, 0);
const ids: Record<string, string> = {};
const demo = (pn: string) => DEMO_DEVICE_TYPES.find((d) => d.partNumber === pn)!;
const serials = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${String(i + 1).padStart(4, '0')}`);
const SHORT = { reason: 'Test fixture: a short sample on purpose' };

async function addRig(code: string, over: Partial<RigEntity> = {}): Promise<string> {
  const r = await t.ctx.ds.getRepository(RigEntity).save({
    code,
    name: `Oven ${code}`,
    socketCount: 64,
    maxTempC: 200,
    maxVoltageV: 800,
    humidityCapable: false,
    maxHumidityPct: null,
    mqttUsername: `rig-${code.toLowerCase()}`,
    mqttSecretHash: 'x',
    credentialsIssuedAt: new Date(clock),
    ...over,
  });
  return r.id;
}

beforeAll(async () => {
  t = await createTestApp({}, { now: () => new Date(clock) });
  const eng = await t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(demo('HPD-2N140'));
  expect(type.status).toBe(201);
  ids.type = type.body.id;
  for (const [code, prefix] of [
    ['HG2611-A', 'A'],
    ['HG2612-C', 'C'],
  ]) {
    const res = await eng.post('/api/lots').send({ code, deviceTypeId: ids.type, quantity: 2400, serials: serials(prefix, 80) });
    expect(res.status).toBe(201);
    ids[code] = res.body.id;
  }
  const plan = await eng.post('/api/plans').send({
    name: 'HTRB 145 °C, 80 % VCBO, 1000 h',
    kind: 'htrb',
    deviceTypeId: ids.type,
    chamberC: 145,
    bias: { vcbV: 112 },
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    sampleSize: 45,
    acceptNumber: 0,
    criteria: {},
  });
  expect(plan.status).toBe(201);
  ids.plan = plan.body.id;
  ids['OV-02'] = await addRig('OV-02');
});
afterAll(async () => {
  await t.close();
});

describe('the earliest-finish proposal on a shared oven is bookable', () => {
  it('a booked run ahead that slides with the clock (the demo defect "16 of 64 sockets free")', async () => {
    const eng = await t.signIn('engineer');
    const first = await eng
      .post('/api/runs')
      .send({ planId: ids.plan, lotIds: [ids['HG2611-A']], sampleSize: 48, rigId: ids['OV-02'], deviation: undefined });
    expect(first.status).toBe(201);
    clock += 30_000; // the booking is overdue: its window slides with the clock
    const p = await eng.post('/api/runs/proposals').send({ planId: ids.plan, lotIds: [ids['HG2612-C']], sampleSize: 45 });
    expect(p.status).toBe(200);
    const option = p.body.options[0];
    console.log(JSON.stringify(p.body.options), JSON.stringify(first.body.scheduledStart), first.body.scheduledEnd);
    clock += 3_000;
    const b = await eng
      .post('/api/runs')
      .send({ planId: ids.plan, lotIds: [ids['HG2612-C']], sampleSize: 45, rigId: option.rigId, start: option.start });
    console.log(b.status, JSON.stringify(b.body).slice(0, 500));
    expect(b.status).toBe(201);
  });
});

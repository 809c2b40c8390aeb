/**
 * A chamber's excursion alarm end to end (issue #22): a storage bake under stress in the simulated
 * oven (rig-simulator/chamber.ts), the oven's controller then pushed off its aim (aimOffsetK, a
 * drifted controller) so the load leaves the plan's band. The server takes the validated reports
 * and raises a "Chamber out of band" alarm naming the run and the band's top, the floor tile counts
 * it, and no hour is credited while the load is out of band. Bad chamber messages — not JSON, a
 * field of the wrong type, an extra field, a report naming another chamber — are rejected, stored
 * in rejected_messages and counted, and change nothing.
 * Band: htsl 150 °C −0/+10 K [pub: JESD22-A103D Table 1].
 */
import type { MqttClient } from 'mqtt';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { RunEntity } from '../../server/db/entities';
import { rigClientId, topics } from '../../shared/mqtt';
import type { SimulatedChamber } from '../../rig-simulator/chamber';
import type { FloorTile } from '../../shared/schemas/floor';
import { recordTimeZero, setRigServiceDates } from '../support/permit';
import { connectClient } from './mqtt-test-helpers';
import { registerChamber, startChamberStack, untilReported, untilRun, type ChamberStack } from './chamber-stack';

jest.setTimeout(120_000);

let s: ChamberStack;
let oven: SimulatedChamber;
let rigId: string;
let runId: string;
let spare: { id: string; username: string; secret: string };
const serials = (n: number) => Array.from({ length: n }, (_, i) => `X${String(i + 1).padStart(4, '0')}`);
const run = () => s.t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

beforeAll(async () => {
  s = await startChamberStack('emberlot-server-chamber-excursion');
  const rig = await registerChamber(s.t, { code: 'HT-02', name: 'Storage oven 2', socketCount: 10, maxTempC: 220 });
  rigId = rig.id;
  // A second chamber with no simulator: the bad messages come from its own (valid) sign-in.
  spare = await registerChamber(s.t, { code: 'HT-03', name: 'Storage oven 3', socketCount: 10, maxTempC: 220 });
  const eng = await s.t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140'));
  const lot = await eng.post('/api/lots').send({ code: 'HG2611-X', deviceTypeId: type.body.id, quantity: 500, serials: serials(4) });
  const templates = (await eng.get(`/api/plans/templates?deviceTypeId=${type.body.id}`)).body.items as Array<{
    kind: string;
    plan: Record<string, unknown>;
  }>;
  const plan = await eng
    .post('/api/plans')
    .send({ ...templates.find((x) => x.kind === 'htsl')!.plan, sampleSize: 4, durationH: 500, readPointsH: [0, 500] });
  expect(plan.status).toBe(201);
  const booked = await eng.post('/api/runs').send({ planId: plan.body.id, lotIds: [lot.body.id], sampleSize: 4, rigId });
  expect(booked.status).toBe(201);
  runId = booked.body.id;
  const op = await s.t.signIn('operator');
  expect((await op.put(`/api/runs/${runId}/sockets`).send({ rowVersion: booked.body.rowVersion, serials: serials(4) })).status).toBe(200);
  // 20 chamber minutes per wall second, a report every 0.1 s (2 chamber minutes).
  oven = s.simulate({
    rigCode: 'HT-02',
    username: rig.username,
    password: rig.secret,
    minTempC: 20,
    maxTempC: 220,
    minutesPerWallSecond: 20,
    samplePeriodWallS: 0.1,
  });
  s.startScheduler();
  await setRigServiceDates(s.t.ctx.ds, rigId);
  await recordTimeZero(s.t.ctx.ds, runId);
  await untilReported(s.t, rigId);
  const started = await op.post(`/api/runs/${runId}/start`).send({ rowVersion: (await run()).rowVersion, confirm: true });
  expect(started.status).toBe(200);
});

afterAll(async () => {
  await s?.stop();
});

async function excursionAlarms(): Promise<Array<{ title: string; runId: string | null; kind: string }>> {
  const eng = await s.t.signIn('engineer');
  const res = await eng.get(`/api/alarms?rigId=${rigId}&kind=ambient-out-of-band`);
  expect(res.status).toBe(200);
  return res.body.items;
}

test('a chamber pushed out of band raises a "Chamber out of band" alarm, the tile counts it, and no hours are credited meanwhile', async () => {
  await untilRun(s.t, runId, 'stressing', 30_000, (r) => r.stressHours > 0.5);
  expect(await excursionAlarms()).toEqual([]);

  // The controller drifts: it aims 30 K above the commanded 155 °C, so the load heads for 185 °C (band top 160 °C).
  oven.cfg.aimOffsetK = 30;
  const deadline = Date.now() + 20_000;
  let alarms = await excursionAlarms();
  while (!alarms.length && Date.now() < deadline) {
    await sleep(200);
    alarms = await excursionAlarms();
  }
  expect(alarms).toHaveLength(1);
  expect(alarms[0].runId).toBe(runId);
  expect(alarms[0].title).toMatch(/^Chamber HT-02: load 1[6-9]\d\.\d °C above the band's top \(160 °C\)$/);
  // The report behind it was stored as the chamber sent it (validated, not altered).
  const over = await s.t.ctx.ds.query(`SELECT count(*)::int AS n FROM chamber_samples WHERE rig_id = $1 AND load_c > 160`, [rigId]);
  expect(over[0].n).toBeGreaterThan(0);

  // While every report is out of band, the hours stand still: once the engine has read past the first
  // report above the band, ten more reports (all above it) add nothing.
  const [first] = await s.t.ctx.ds.query(`SELECT min(seq)::float8 AS seq FROM chamber_samples WHERE rig_id = $1 AND load_c > 160`, [rigId]);
  const atFirst = await untilRun(s.t, runId, 'stressing', 20_000, (r) => r.accruedToSeq >= Number(first.seq));
  const later = await untilRun(s.t, runId, 'stressing', 20_000, (r) => r.accruedToSeq >= atFirst.accruedToSeq + 10);
  const between = await s.t.ctx.ds.query(
    `SELECT count(*)::int AS n, min(load_c) AS lo FROM chamber_samples WHERE rig_id = $1 AND seq >= $2 AND seq <= $3`,
    [rigId, first.seq, later.accruedToSeq],
  );
  expect(between[0].n).toBeGreaterThanOrEqual(10);
  expect(Number(between[0].lo)).toBeGreaterThan(160);
  expect(later.stressHours).toBe(atFirst.stressHours);
  const h2 = later.stressHours;

  // The floor tile of the chamber counts the open excursion alarm.
  const op = await s.t.signIn('operator');
  const floor = await op.get('/api/floor');
  const tile: FloorTile = floor.body.items.find((x: FloorTile) => x.code === 'HT-02');
  expect(tile.chamber).toMatchObject({ type: 'oven', planKind: 'htsl', step: 'soak', loaded: 4, excursionAlarms: 1 });
  expect(tile.chamber!.loadC).toBeGreaterThan(160);

  // Back on its aim: the load returns to the band and the hours move again.
  oven.cfg.aimOffsetK = 0;
  await untilRun(s.t, runId, 'stressing', 30_000, (r) => r.stressHours > h2);
});

test('bad chamber messages are rejected, stored and counted, and change nothing', async () => {
  const port = Number(new URL(s.brokerUrl).port);
  const c: MqttClient = await connectClient(port, { clientId: rigClientId('HT-03'), username: spare.username, password: spare.secret });
  const counter = async () =>
    Number((await s.t.ctx.ds.query(`SELECT value FROM system_counters WHERE name = 'ingest_rejected'`))[0]?.value ?? 0);
  const rejectedBefore = await counter();
  const samplesBefore = (await s.t.ctx.ds.query(`SELECT count(*)::int AS n FROM chamber_samples`))[0].n;
  const good = {
    v: 1,
    rig: 'HT-03',
    seq: 1,
    ts: new Date().toISOString(),
    clockS: 60,
    airC: 150,
    loadC: 150,
    setpointC: 150,
    humidityPct: null,
    pressureKPa: null,
    doorOpen: false,
  };
  const bad = [
    'not json at all',
    JSON.stringify({ ...good, loadC: 'hot' }),
    JSON.stringify({ ...good, fanRpm: 1200 }),
    JSON.stringify({ ...good, rig: 'HT-02' }),
  ];
  for (const b of bad)
    await new Promise<void>((res, rej) => c.publish(topics.chamber('HT-03'), b, { qos: 1 }, (e) => (e ? rej(e) : res())));
  await new Promise<void>((res) => c.end(false, {}, () => res()));

  let rows: Array<{ reason: string; rig_code: string }> = [];
  for (let k = 0; k < 100 && rows.length < bad.length; k++) {
    rows = await s.t.ctx.ds.query(`SELECT reason, rig_code FROM rejected_messages WHERE topic = $1 ORDER BY id`, [topics.chamber('HT-03')]);
    await sleep(100);
  }
  expect(rows.map((r) => r.rig_code)).toEqual(['HT-03', 'HT-03', 'HT-03', 'HT-03']);
  expect(rows[0].reason).toMatch(/^chamber: /);
  expect(rows[1].reason).toMatch(/loadC/);
  expect(rows[2].reason).toMatch(/fanRpm/);
  expect(rows[3].reason).toMatch(/HT-02/);
  for (let k = 0; k < 50 && (await counter()) < rejectedBefore + bad.length; k++) await sleep(100);
  expect(await counter()).toBe(rejectedBefore + bad.length);
  // Nothing stored for HT-03, and HT-02's run did not take the report that named it.
  const mine = await s.t.ctx.ds.query(
    `SELECT count(*)::int AS n FROM chamber_samples c JOIN rigs r ON r.id = c.rig_id WHERE r.code = 'HT-03'`,
  );
  expect(mine[0].n).toBe(0);
  const ht02Seq1 = await s.t.ctx.ds.query(`SELECT count(*)::int AS n FROM chamber_samples WHERE rig_id = $1 AND seq = 1`, [rigId]);
  expect(ht02Seq1[0].n).toBe(0);
  expect((await s.t.ctx.ds.query(`SELECT count(*)::int AS n FROM chamber_samples`))[0].n).toBeGreaterThanOrEqual(samplesBefore);
});

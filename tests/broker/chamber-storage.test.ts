/**
 * Storage (htsl) and autoclave (ac) runs end to end through the real pieces (issue #22): booked and
 * loaded through the API (a serial list for the bake, load positions for the autoclave), started
 * with the permit, the simulated chamber (rig-simulator/chamber.ts) driven by the scheduler's set
 * point, hours credited from the chamber's own reports while the load is in the plan's band, a
 * read-point pause (chamber to room, devices out once the load is safe to open), measured, resumed,
 * and finished exactly at the plan's hours.
 *
 * The hour oracle below re-adds the intervals between consecutive reports both in band, from the
 * stored reports, with the bands stated from the methods: htsl −0/+10 K [pub: JESD22-A103D Table 1],
 * ac ±2 K and 100 % RH [memory: JESD22-A102 121 ± 2 °C — confirm]; humidity within ±5 % RH [practice].
 */
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { RunSocketEntity } from '../../server/db/entities';
import type { SimulatedChamber } from '../../rig-simulator/chamber';
import { recordTimeZero, setRigServiceDates } from '../support/permit';
import { registerChamber, startChamberStack, untilReported, untilRun, type ChamberStack } from './chamber-stack';

jest.setTimeout(120_000);

let s: ChamberStack;
const ids: Record<string, string> = {};
const sims: Record<string, SimulatedChamber> = {};
const serials = (n: number, from = 1) => Array.from({ length: n }, (_, i) => `S${String(i + from).padStart(4, '0')}`);

beforeAll(async () => {
  s = await startChamberStack('emberlot-server-chamber-storage');
  const oven = await registerChamber(s.t, { code: 'HT-01', name: 'Storage oven 1', socketCount: 20, maxTempC: 220 });
  const vessel = await registerChamber(s.t, {
    code: 'AC-01',
    name: 'Autoclave 1',
    socketCount: 20,
    maxTempC: 180,
    humidityCapable: true,
    maxHumidityPct: 100,
    maxPressureKPa: 300,
  });
  ids['HT-01'] = oven.id;
  ids['AC-01'] = vessel.id;
  const eng = await s.t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140'));
  expect(type.status).toBe(201);
  const lot = await eng.post('/api/lots').send({ code: 'HG2611-S', deviceTypeId: type.body.id, quantity: 500, serials: serials(12) });
  expect(lot.status).toBe(201);
  ids.lot = lot.body.id;
  const templates = (await eng.get(`/api/plans/templates?deviceTypeId=${type.body.id}`)).body.items as Array<{
    kind: string;
    plan: Record<string, unknown>;
  }>;
  // Short plans for a test (hours at 60 chamber minutes per wall second): the templates' conditions, fewer hours.
  const htsl = await eng
    .post('/api/plans')
    .send({ ...templates.find((x) => x.kind === 'htsl')!.plan, sampleSize: 6, durationH: 6, readPointsH: [0, 3, 6] });
  expect(htsl.status).toBe(201);
  ids.htsl = htsl.body.id;
  const ac = await eng
    .post('/api/plans')
    .send({ ...templates.find((x) => x.kind === 'ac')!.plan, sampleSize: 6, durationH: 4, readPointsH: [0, 2, 4] });
  expect(ac.status).toBe(201);
  expect(ac.body).toMatchObject({ chamberC: 121, humidityPct: 100, acCondition: 'autoclave' });
  ids.ac = ac.body.id;
  // 60 chamber minutes per wall second, a report every 0.1 s: one every 6 chamber minutes.
  sims['HT-01'] = s.simulate({
    rigCode: 'HT-01',
    username: oven.username,
    password: oven.secret,
    minTempC: 20,
    maxTempC: 220,
    samplePeriodWallS: 0.1,
  });
  sims['AC-01'] = s.simulate({
    rigCode: 'AC-01',
    username: vessel.username,
    password: vessel.secret,
    minTempC: 20,
    maxTempC: 180,
    humidityCapable: true,
    pressureVessel: true,
    samplePeriodWallS: 0.1,
  });
  s.startScheduler();
});

afterAll(async () => {
  await s?.stop();
});

/** Hours between consecutive stored reports both in band, from `fromSeq` up to `toSeq` (the oracle). */
async function inBandHours(
  rigId: string,
  fromSeq: number,
  toSeq: number,
  band: { lowC: number; highC: number; rh: number | null },
): Promise<{ total: number; beforeLast: number }> {
  const rows: Array<{ clock_s: number; load_c: number; humidity_pct: number | null }> = await s.t.ctx.ds.query(
    `SELECT clock_s, load_c, humidity_pct FROM chamber_samples WHERE rig_id = $1 AND seq >= $2 AND seq <= $3 ORDER BY seq`,
    [rigId, fromSeq, toSeq],
  );
  const ok = (r: (typeof rows)[number]) =>
    r.load_c >= band.lowC &&
    r.load_c <= band.highC &&
    (band.rh === null || (r.humidity_pct !== null && Math.abs(r.humidity_pct - band.rh) <= 5));
  let total = 0;
  let beforeLast = 0;
  for (let i = 1; i < rows.length; i++) {
    if (ok(rows[i - 1]) && ok(rows[i])) {
      beforeLast = total;
      total += (rows[i].clock_s - rows[i - 1].clock_s) / 3600;
    }
  }
  return { total, beforeLast };
}

async function ambientSeq(runId: string): Promise<number> {
  const rows = await s.t.ctx.ds.query(
    `SELECT details->>'seq' AS seq FROM audit_log WHERE entity_id = $1 AND action = 'run.ambient-reached' ORDER BY at LIMIT 1`,
    [runId],
  );
  return Number(rows[0].seq);
}

async function lifecycle(opts: {
  kind: 'htsl' | 'ac';
  rig: 'HT-01' | 'AC-01';
  load: (rowVersion: number) => Record<string, unknown>;
  readPointH: number;
  durationH: number;
  band: { lowC: number; highC: number; rh: number | null };
}) {
  const { t } = s;
  const eng = await t.signIn('engineer');
  const op = await t.signIn('operator');
  // Book.
  const booked = await eng.post('/api/runs').send({ planId: ids[opts.kind], lotIds: [ids.lot], sampleSize: 6, rigId: ids[opts.rig] });
  expect(booked.status).toBe(201);
  expect(booked.body).toMatchObject({ state: 'booked', rig: { code: opts.rig } });
  const runId: string = booked.body.id;
  // Load.
  const loaded = await op.put(`/api/runs/${runId}/sockets`).send(opts.load(booked.body.rowVersion));
  expect(loaded.status).toBe(200);
  expect(loaded.body.stored).toBe(true);
  expect(loaded.body.run.sockets).toHaveLength(6);
  // Start: the permit (service dates, time zero, the chamber's reports), then the operator confirms.
  await setRigServiceDates(t.ctx.ds, ids[opts.rig]);
  expect(await recordTimeZero(t.ctx.ds, runId)).toBe(6);
  await untilReported(t, ids[opts.rig]);
  const before = (await eng.get(`/api/runs/${runId}`)).body;
  const started = await op.post(`/api/runs/${runId}/start`).send({ rowVersion: before.rowVersion, confirm: true });
  expect(started.status).toBe(200);

  // Hours credited while the load is in band; the run stops at the read point exactly.
  const held = await untilRun(t, runId, 'read-hold', 40_000);
  expect(held.stressHours).toBeCloseTo(opts.readPointH, 9);
  const from = await ambientSeq(runId);
  const oracle = await inBandHours(ids[opts.rig], from, held.accruedToSeq, opts.band);
  expect(oracle.beforeLast).toBeLessThan(opts.readPointH);
  expect(oracle.total).toBeGreaterThanOrEqual(opts.readPointH - 1e-9);
  const sockets = await t.ctx.ds.getRepository(RunSocketEntity).find({ where: { runId } });
  expect(sockets.map((x) => x.accruedHours)).toEqual(Array(6).fill(held.stressHours));
  // The pause: the chamber is sent to room with humidity off; devices may come out once the load is safe.
  const safe = await untilRun(t, runId, 'read-hold', 30_000, (r) => r.biasRemovedAt !== null);
  expect(safe.holdPhase).toBe('safe-to-open');
  expect(s.sent.some((x) => x.rig === opts.rig && x.cmd.type === 'setpoint' && x.cmd.setpointC === 25 && x.cmd.humidityPct === null)).toBe(
    true,
  );
  expect(s.sent.some((x) => x.rig === opts.rig && x.cmd.type === 'bias')).toBe(false); // nothing is biased in a chamber
  expect(s.events.filter((e) => e.runId === runId && e.type === 'read-point-due').map((e) => e.readPointIndex)).toEqual([1]);

  // Measured: the run resumes and finishes exactly at the plan's hours.
  const measured = await op.post(`/api/runs/${runId}/measurements-done`).send({ rowVersion: safe.rowVersion });
  expect(measured.status).toBe(200);
  const done = await untilRun(t, runId, 'finished', 60_000);
  expect(done.stressHours).toBeCloseTo(opts.durationH, 9);
  const after = await t.ctx.ds.getRepository(RunSocketEntity).find({ where: { runId } });
  expect(after.map((x) => x.accruedHours)).toEqual(Array(6).fill(done.stressHours));
  return { runId, done };
}

test('a storage bake (htsl 150 °C): booked, loaded by serial list, hours credited in band, paused at 3 h, finished at 6 h', async () => {
  const { runId } = await lifecycle({
    kind: 'htsl',
    rig: 'HT-01',
    load: (rowVersion) => ({ rowVersion, serials: serials(6) }),
    readPointH: 3,
    durationH: 6,
    band: { lowC: 150, highC: 160, rh: null },
  });
  const cmd = s.sent.find((x) => x.rig === 'HT-01' && x.cmd.type === 'setpoint' && x.cmd.setpointC > 100)?.cmd;
  // The oven is aimed at the band's middle (155 °C), dry, no programme.
  expect(cmd).toMatchObject({ type: 'setpoint', setpointC: 155, humidityPct: null, profile: null });
  const run = (await (await s.t.signIn('engineer')).get(`/api/runs/${runId}`)).body;
  expect(run.sockets.map((x: { serial: string }) => x.serial)).toEqual(serials(6));
});

test('an autoclave run (121 °C, 100 % RH): loaded by position, saturated steam, paused at 2 h, finished at 4 h', async () => {
  await lifecycle({
    kind: 'ac',
    rig: 'AC-01',
    // Load positions 10…15 (a position map, as the load screen sends it).
    load: (rowVersion) => ({ rowVersion, sockets: Object.fromEntries(serials(6, 7).map((x, i) => [String(10 + i), x])) }),
    readPointH: 2,
    durationH: 4,
    band: { lowC: 119, highC: 123, rh: 100 },
  });
  const cmd = s.sent.find((x) => x.rig === 'AC-01' && x.cmd.type === 'setpoint' && x.cmd.setpointC > 100)?.cmd;
  expect(cmd).toMatchObject({ type: 'setpoint', setpointC: 121, humidityPct: 100, profile: null });
  // Saturated steam at 121 °C is about 205 kPa absolute [memory: steam tables, 2.05 bar at 121 °C].
  const hot: Array<{ p: number }> = await s.t.ctx.ds.query(
    `SELECT pressure_k_pa AS p FROM chamber_samples WHERE rig_id = $1 AND load_c BETWEEN 120.5 AND 121.5 AND humidity_pct = 100 LIMIT 5`,
    [ids['AC-01']],
  );
  expect(hot.length).toBeGreaterThan(0);
  for (const h of hot) {
    expect(h.p).toBeGreaterThan(195);
    expect(h.p).toBeLessThan(215);
  }
  const positions = await s.t.ctx.ds.getRepository(RunSocketEntity).find({ where: {}, order: { socketIndex: 'ASC' } });
  expect(positions.filter((p) => p.socketIndex >= 10).map((p) => p.socketIndex)).toEqual([10, 11, 12, 13, 14, 15]);
});

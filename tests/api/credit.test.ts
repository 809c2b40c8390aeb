/**
 * Credit from the measured junction (issue #20 item 6): a powered-life run on a heat-sunk board,
 * driven by the scheduler through a fake RigLink with telemetry rows written as ingest would. The
 * plan check predicts Tj ≈ 145 °C from free-air θja; the sockets' telemetry (case 29 °C + θjc × P)
 * puts the junction near 35 °C. The lot's FIT must credit each device at its measured junction.
 * Stress clock: 900 s per sample (0.25 h).
 */
import { jStat } from 'jstat';
import type { CommandAck } from '../../shared/mqtt';
import { buildPlanTemplates } from '../../shared/plan-templates';
import { randomUUID } from 'node:crypto';
import { DeviceEntity, LotEntity, RigEntity, RunEntity, RunSocketEntity, StressPlanEntity } from '../../server/db/entities';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { insertTestDeviceType } from '../support/db';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestApp, type TestApp } from '../support/api';
import { grantStartPermit } from '../support/permit';

/** A rig that applies each cmdId once and keeps the bias it was sent. */
class FakeRig implements RigLink {
  setpointC = 25;
  bias = new Map<number, { on: boolean; vV: number; iA: number }>();
  readonly applied = new Set<string>();
  connected() {
    return true;
  }
  async send(rigCode: string, cmd: RigCommandBody, opts?: { cmdId?: string }): Promise<CommandAck> {
    const cmdId = opts?.cmdId ?? 'anon';
    if (!this.applied.has(cmdId)) {
      this.applied.add(cmdId);
      if (cmd.type === 'setpoint') this.setpointC = cmd.setpointC;
      if (cmd.type === 'bias') {
        const list = cmd.sockets === 'all' ? [0, 1, 2] : cmd.sockets;
        for (const k of list) this.bias.set(k, { on: cmd.on, vV: cmd.vV ?? 0, iA: cmd.icA ?? 0 });
      }
    }
    return { v: 1, rig: rigCode, cmdId, ok: true };
  }
}

const DEVICE = DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-3P90')!;
/** Case (socket) temperature of the heat-sunk board, °C: a few kelvin above the 25 °C chamber. */
const CASE_C = 29;
/** Relative agreement (the test's k has 7 digits, the product's CODATA 2018 value 10). */
const near = (actual: number, expected: number, rel = 1e-6) => expect(Math.abs(actual / expected - 1)).toBeLessThan(rel);
/** Arrhenius factor, written out here (JEDEC JEP122 / JESD85), k = 8.617333e-5 eV/K [pub: CODATA 2018]. */
const af = (eaEv: number, useC: number, tC: number) => Math.exp((eaEv / 8.617333e-5) * (1 / (useC + 273.15) - 1 / (tC + 273.15)));

let t: TestApp;
let rigId: string;
let runId: string;
let lotId: string;
let plan: { eaEv: number; useC: number; predictedTjC: number; vceV: number; icA: number };
const fake = new FakeRig();
let seq = 0;
let clockS = 0;
let scheduler: RunScheduler;
jest.setTimeout(30_000);

/** One batch per chamber value; each energised socket reports the case temperature, VCE and IC it was sent. */
async function land(chambers: number[]) {
  for (const c of chambers) {
    seq += 1;
    clockS += 900;
    await t.ctx.ds.query(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c) VALUES ($1, $2, now(), $3, $4, null, $5)`,
      [rigId, seq, clockS, c, fake.setpointC],
    );
    for (const k of [0, 1, 2]) {
      const b = fake.bias.get(k);
      const on = !!b?.on;
      await t.ctx.ds.query(
        `INSERT INTO telemetry_samples (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped) VALUES ($1, $2, $3, $4, $5, $6, $7, false)`,
        [rigId, seq, k, on ? CASE_C : c, on ? b!.vV : 0, on ? b!.iA : 0, on],
      );
    }
  }
}

const step = async () => {
  await scheduler.pass();
  await scheduler.idle();
};

beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(DEVICE);
  expect(type.status).toBe(201);
  const template = buildPlanTemplates({ ...DEVICE, id: type.body.id } as never).find((x) => x.kind === 'hotl')!.plan!;
  const created = await eng.post('/api/plans').send({
    ...template,
    deviceTypeId: type.body.id,
    name: 'Powered life, heat-sunk board (credit test)',
    durationH: 10,
    readPointsH: [0, 4, 10],
    sampleSize: 3,
    acceptNumber: 0,
  });
  expect(created.status).toBe(201);
  plan = {
    eaEv: created.body.eaEv,
    useC: created.body.useC,
    predictedTjC: created.body.checkResult.derived.tjC,
    vceV: created.body.bias.vceV,
    icA: created.body.bias.icA,
  };
  const lot = await eng
    .post('/api/lots')
    .send({ code: 'HG2699-K', deviceTypeId: type.body.id, quantity: 100, serials: ['K0001', 'K0002', 'K0003'] });
  lotId = lot.body.id;
  rigId = (
    await t.ctx.ds.getRepository(RigEntity).save({
      code: 'OV-91',
      name: 'Heat-sunk board',
      socketCount: 3,
      maxTempC: 200,
      maxVoltageV: 800,
      mqttUsername: 'rig-ov-91',
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
      online: true,
    })
  ).id;
  const booked = await eng.post('/api/runs').send({ planId: created.body.id, lotIds: [lotId], sampleSize: 3, rigId });
  expect(booked.status).toBe(201);
  runId = booked.body.id;
  const op = await t.signIn('operator');
  const loaded = await op
    .put(`/api/runs/${runId}/sockets`)
    .send({ rowVersion: booked.body.rowVersion, sockets: { 0: 'K0001', 1: 'K0002', 2: 'K0003' } });
  expect(loaded.body.readyToStart).toBe(true);
  // The start permit; the rig's report sits at seq 0 with the stress clock of its first sample, so it changes no count.
  await grantStartPermit(t.ctx.ds, runId, rigId, { seq: 0, clockS: 900 });
  const started = await op.post(`/api/runs/${runId}/start`).send({ rowVersion: loaded.body.run.rowVersion, confirm: true });
  expect(started.body.state).toBe('heating');
  scheduler = new RunScheduler(t.ctx, {
    rigLink: () => fake,
    cronExpression: null,
    listen: false,
    ambientCheckEveryMs: 0,
    overdueCheckEveryMs: 0,
    log: () => undefined,
  });
});
afterAll(async () => {
  await scheduler?.stop();
  await t.close();
});

describe('equivalent hours from the measured junction', () => {
  it('the plan check predicts Tj ≈ 145 °C from free-air θja (the template aims at Tj max − 5 °C)', () => {
    expect(plan.predictedTjC).toBeCloseTo(145, 0);
    expect(plan.vceV * plan.icA).toBeGreaterThan(1.5);
  });

  it('accrual records each socket’s credited hours at its junction estimated from telemetry (case + θjc × V·I)', async () => {
    await step();
    await land([25]);
    await step();
    expect((await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: runId })).state).toBe('stressing');
    await step();
    expect(fake.bias.get(0)).toMatchObject({ on: true, vV: plan.vceV, iA: plan.icA });
    await land(Array.from({ length: 17 }, () => 25));
    await step();
    const r = await t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
    expect(r).toMatchObject({ state: 'read-hold', stressHours: 4 });
    const sockets = await t.ctx.ds.getRepository(RunSocketEntity).find({ where: { runId }, order: { socketIndex: 'ASC' } });
    // JESD51 definition Tj = Tc + θjc·P: 29 °C + 3.125 °C/W × VCE·IC
    const tj = CASE_C + DEVICE.thetaJcCPerW * plan.vceV * plan.icA;
    expect(tj).toBeGreaterThan(34);
    expect(tj).toBeLessThan(36);
    for (const s of sockets) {
      expect(s.accruedHours).toBe(4);
      expect(s.stressSegments).toHaveLength(1);
      expect(s.stressSegments![0].hours).toBeCloseTo(4, 9);
      expect(s.stressSegments![0].tjC).toBeCloseTo(tj, 4);
    }
  });

  it('the lot’s FIT credits the 35 °C junction, not the predicted 145 °C: ~1000× fewer equivalent hours (number asserted)', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get(`/api/analytics/lots/${lotId}`);
    expect(res.status).toBe(200);
    const f = res.body.fit;
    const tj = CASE_C + DEVICE.thetaJcCPerW * plan.vceV * plan.icA;
    expect(f.mechanism).toBe('temperature');
    expect(f.mechanismLabel).toBe('Temperature (Arrhenius)');
    expect(f.junction).toMatchObject({ devicesFromTelemetry: 3, devicesFromChamber: 0 });
    expect(f.junction.tjMeanC).toBeCloseTo(tj, 4);
    expect(f.deviceHours).toBeCloseTo(12, 9);
    // 3 devices × 4 h at AF(Tj) from the plan's use temperature (Arrhenius, JEDEC JEP122)
    const expectedEq = 12 * af(plan.eaEv, plan.useC, tj);
    near(f.equivalentDeviceHours, expectedEq);
    // What the plan's predicted junction would have credited, and the over-credit it avoids.
    const predictedEq = 12 * af(plan.eaEv, plan.useC, plan.predictedTjC);
    const ratio = predictedEq / f.equivalentDeviceHours;
    expect(ratio).toBeGreaterThan(900);
    expect(ratio).toBeLessThan(1200);
    // At Ea 0.7 eV and 55 °C use, a junction near 35 °C decelerates: AF = exp[(0.7/k)(1/328.15 − 1/308.15)]
    // = exp(−1.607) = 0.20 (by hand), so 12 device-hours earn ≈ 2.4 at use conditions, not ≈ 2,900.
    expect(plan).toMatchObject({ eaEv: 0.7, useC: 55 });
    expect(f.equivalentDeviceHours).toBeGreaterThan(2.2);
    expect(f.equivalentDeviceHours).toBeLessThan(2.6);
    // and at the predicted 145 °C: AF(55 → 145 °C, 0.7 eV) ≈ 206 (REFERENCE §3 gives 259 at 150 °C), ≈ 2,470 equivalent hours
    expect(predictedEq).toBeGreaterThan(2_400);
    expect(predictedEq).toBeLessThan(2_550);
    // FIT 60 % = χ²(0.6; 2)/(2 · t_eq) × 1e9 (JESD85; χ² from jstat)
    near(f.fit60, (jStat.chisquare.inv(0.6, 2) / (2 * expectedEq)) * 1e9);
    expect(f.parameters).toEqual([
      { name: 'Ea', value: 0.7, unit: 'eV', source: 'plan' },
      { name: 'use temperature', value: 55, unit: '°C', source: 'plan' },
    ]);
  });

  it('the CSV export names the mechanism, the model and its parameters', async () => {
    const mgr = await t.signIn('manager');
    const csv = await mgr.get(`/api/reports/lots/${lotId}/report.csv`);
    expect(csv.status).toBe(200);
    expect(csv.text).toContain('Failure mechanism,Temperature (Arrhenius)');
    expect(csv.text).toMatch(/Model parameters,"?Ea 0\.7 eV \(plan\), use temperature 55 °C \(plan\)"?/);
  });
});

describe('FIT per mechanism, never pooled', () => {
  const typeIds: Record<string, string> = {};
  const lots: Record<string, string> = {};

  beforeAll(async () => {
    await t.ctx.ds.transaction(async (m) => {
      const type = await insertTestDeviceType(m, 'HPD-M100');
      typeIds.m = type.id;
      const rig = await m.save(
        m.create(RigEntity, {
          code: 'HC-92',
          name: 'humidity chamber',
          socketCount: 256,
          maxTempC: 200,
          maxVoltageV: 800,
          humidityCapable: true,
          mqttUsername: 'rig-hc-92',
          mqttSecretHash: 'x',
          credentialsIssuedAt: new Date(),
        }),
      );
      const plan = (p: Partial<StressPlanEntity>) =>
        m.save(
          m.create(StressPlanEntity, {
            planKey: randomUUID(),
            version: 1,
            name: 'plan',
            deviceTypeId: type.id,
            humidityPct: null,
            bias: { vcbV: 100, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
            durationH: 1000,
            readPointsH: [0, 168, 500, 1000],
            sampleSize: 20,
            acceptNumber: 0,
            criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
            eaEv: 0.7,
            useC: 55,
            ...p,
          }),
        );
      const htrb = await plan({ name: 'HTRB 125 °C', kind: 'htrb', chamberC: 125 });
      const thb = await plan({ name: 'THB 85/85', kind: 'thb', chamberC: 85, humidityPct: 85, eaEv: 0.9, useC: 25 });
      for (const [code, p] of [
        ['HG9901-A', htrb],
        ['HG9901-B', thb],
      ] as const) {
        const lot = await m.save(m.create(LotEntity, { code, deviceTypeId: type.id, quantity: 100, notes: '' }));
        const devices = await m.save(
          Array.from({ length: 20 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `${code.slice(-1)}${i + 1}` })),
        );
        await insertHistoryRun(m, {
          code: `R-${code}`,
          plan: p,
          deviceType: type,
          rig,
          lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: -1, leakageGrowthPer1000h: 1.1 } }],
          state: 'finished',
          startedAt: new Date('2026-03-01T00:00:00Z'),
          stressHours: 1000,
          measuredH: [0, 168, 500, 1000],
          noise: 0,
          junctionC: p.chamberC,
        });
        lots[code] = lot.id;
      }
    });
  });

  it('a part stressed by HTRB and THB gets a temperature FIT and a humidity FIT, each from its own equivalent hours', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get(`/api/analytics/device-types/${typeIds.m}`);
    expect(res.status).toBe(200);
    const byMech = Object.fromEntries(res.body.mechanisms.map((x: { mechanism: string }) => [x.mechanism, x]));
    expect(Object.keys(byMech).sort()).toEqual(['humidity', 'temperature']);
    // Temperature: 20 × 1000 h at 125 °C from 55 °C, Ea 0.7 → AF 77.6 [REFERENCE §3, JESD85 method]
    const eqT = 20_000 * af(0.7, 55, 125);
    expect(Math.abs(eqT / (20_000 * 77.6) - 1)).toBeLessThan(0.02);
    near(byMech.temperature.equivalentDeviceHours, eqT);
    // Humidity: Peck at 85 °C/85 % RH from 25 °C/60 %, n 2.66 (the product's assumed exponent), Ea 0.9 eV
    const eqH = 20_000 * Math.pow(85 / 60, 2.66) * af(0.9, 25, 85);
    near(byMech.humidity.equivalentDeviceHours, eqH);
    // χ²(0.6; 2) from jstat: each FIT from its own mechanism's hours (JESD85)
    const chi = jStat.chisquare.inv(0.6, 2);
    near(byMech.temperature.fit60, (chi / (2 * eqT)) * 1e9);
    near(byMech.humidity.fit60, (chi / (2 * eqH)) * 1e9);
    // pooled, the two would give χ²/(2·(eqT + eqH)): a different number that the response never shows
    const pooled = (chi / (2 * (eqT + eqH))) * 1e9;
    expect(res.body.mechanisms.some((x: { fit60: number }) => Math.abs(x.fit60 - pooled) < 1e-6 * pooled)).toBe(false);
    expect(byMech.humidity.parameters).toEqual(
      expect.arrayContaining([
        { name: 'n', value: 2.66, unit: '', source: 'assumed, from memory' },
        { name: 'use humidity', value: 60, unit: '% RH', source: 'assumed field condition' },
      ]),
    );
  });

  it('the THB lot’s own FIT names the humidity mechanism and the chamber humidity it was earned at', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get(`/api/analytics/lots/${lots['HG9901-B']}`);
    expect(res.body.fit).toMatchObject({ mechanism: 'humidity', mechanismLabel: 'Humidity (Peck)' });
    expect(res.body.fit.junction).toMatchObject({ devicesFromTelemetry: 20, tjMeanC: 85 });
    const csv = await mgr.get(`/api/reports/lots/${lots['HG9901-B']}/report.csv`);
    expect(csv.text).toContain('Failure mechanism,Humidity (Peck)');
  });
});

/**
 * A whole short run driven by the scheduler through a fake RigLink, with synthetic telemetry rows
 * written straight into telemetry_batches / telemetry_samples (as ingest would): heating → ambient
 * → stressing → read point (cool under bias, then bias off: the hold's sequence, shared/holds) →
 * measurements done → heating (ambient late: alarm event) → stressing → a scheduler restart mid-run
 * → a rig reboot → cooling under bias → bias off → finished.
 * Hours are asserted exactly; after the restart no command is sent again.
 * Stress clock: 900 s per sample (0.25 h).
 */
import type { CommandAck } from '../../shared/mqtt';
import { AlarmEntity, AuditLogEntity, RigEntity, RunEntity, RunSocketEntity } from '../../server/db/entities';
import { handleRunEvent } from '../../server/modules/alarms/run-event-alarms';
import { RUN_EVENT, type RunEvent } from '../../server/modules/runs/run-events';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestApp, type TestApp } from '../support/api';
import { grantStartPermit } from '../support/permit';

/** A rig that applies each cmdId once (like the real one) and remembers everything it was sent. */
class FakeRig implements RigLink {
  setpointC = 25;
  bias = new Map<number, { on: boolean; vV: number }>();
  tripped = new Set<number>();
  readonly applied = new Set<string>();
  readonly sends: Array<{ cmdId: string; cmd: RigCommandBody }> = [];
  connected() {
    return true;
  }
  async send(rigCode: string, cmd: RigCommandBody, opts?: { cmdId?: string }): Promise<CommandAck> {
    const cmdId = opts?.cmdId ?? 'anon';
    this.sends.push({ cmdId, cmd });
    if (!this.applied.has(cmdId)) {
      this.applied.add(cmdId);
      if (cmd.type === 'setpoint') this.setpointC = cmd.setpointC;
      if (cmd.type === 'bias') {
        const list = cmd.sockets === 'all' ? [0, 1, 2, 3] : cmd.sockets;
        for (const k of list) if (!this.tripped.has(k)) this.bias.set(k, { on: cmd.on, vV: cmd.vV ?? this.bias.get(k)?.vV ?? 0 });
      }
    }
    return { v: 1, rig: rigCode, cmdId, ok: true };
  }
  trip(k: number) {
    this.tripped.add(k);
    this.bias.set(k, { on: false, vV: 0 });
  }
}

let t: TestApp;
let rigId: string;
let runId: string;
const fake = new FakeRig();
let seq = 0;
let clockS = 0;
const events: RunEvent[] = [];

/** Store samples as ingest would: one batch per chamber value, every socket of the board. */
async function land(chambers: number[], opts: { reboot?: boolean } = {}) {
  for (const [i, c] of chambers.entries()) {
    seq += 1;
    clockS = opts.reboot && i === 0 ? 0 : clockS + 900;
    await t.ctx.ds.query(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c) VALUES ($1, $2, now(), $3, $4, null, $5)`,
      [rigId, seq, clockS, c, fake.setpointC],
    );
    for (const k of [0, 1, 2, 3]) {
      const b = fake.bias.get(k);
      const on = !!b?.on && !fake.tripped.has(k);
      await t.ctx.ds.query(
        `INSERT INTO telemetry_samples (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped) VALUES ($1, $2, $3, $4, $5, $6, $7, $8)`,
        [rigId, seq, k, c + 1, on ? b!.vV : 0, on ? 2e-8 : 0, on, fake.tripped.has(k)],
      );
    }
  }
}

const run = () => t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: runId });
const socketHours = async () =>
  Object.fromEntries(
    (await t.ctx.ds.getRepository(RunSocketEntity).find({ where: { runId }, order: { socketIndex: 'ASC' } })).map((s) => [
      s.socketIndex,
      s.accruedHours,
    ]),
  );
const step = async (s: RunScheduler) => {
  await s.pass();
  await s.idle();
};

let scheduler: RunScheduler;
jest.setTimeout(20_000);

beforeAll(async () => {
  t = await createTestApp();
  t.ctx.events.on(RUN_EVENT, (e: RunEvent) => events.push(e));
  const eng = await t.signIn('engineer');
  const type = await eng.post('/api/device-types').send(DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140'));
  const lot = await eng
    .post('/api/lots')
    .send({ code: 'HG2611-A', deviceTypeId: type.body.id, quantity: 100, serials: ['A0001', 'A0002', 'A0003'] });
  const plan = await eng.post('/api/plans').send({
    name: 'HTRB 145 °C short',
    kind: 'htrb',
    deviceTypeId: type.body.id,
    chamberC: 145,
    bias: { vcbV: 112, tolerancePct: 5 },
    durationH: 10,
    readPointsH: [0, 4, 10],
    sampleSize: 3,
    acceptNumber: 0,
    criteria: {},
  });
  expect(plan.status).toBe(201);
  rigId = (
    await t.ctx.ds.getRepository(RigEntity).save({
      code: 'OV-01',
      name: 'Oven 1',
      socketCount: 4,
      maxTempC: 200,
      maxVoltageV: 800,
      mqttUsername: 'rig-ov-01',
      mqttSecretHash: 'x',
      credentialsIssuedAt: new Date(),
      online: true,
    })
  ).id;
  const booked = await eng.post('/api/runs').send({ planId: plan.body.id, lotIds: [lot.body.id], sampleSize: 3, rigId });
  expect(booked.status).toBe(201);
  runId = booked.body.id;
  const op = await t.signIn('operator');
  const loaded = await op
    .put(`/api/runs/${runId}/sockets`)
    .send({ rowVersion: booked.body.rowVersion, sockets: { 0: 'A0001', 1: 'A0002', 2: 'A0003' } });
  expect(loaded.body.readyToStart).toBe(true);
  // The rig's report sits at seq 0 with the stress clock of its first sample here, so it changes no count below.
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

describe('a run from heating to finished, driven by the scheduler', () => {
  it('heating: sends the chamber set point once, with a stable cmdId', async () => {
    await step(scheduler);
    await step(scheduler);
    expect(fake.sends).toHaveLength(1);
    expect(fake.sends[0].cmdId).toMatch(new RegExp(`^run:${runId}:heat:`));
    // HTRB 145 °C with the method's +5/−0 K band [memory: JESD22-A108 — confirm]: the rig aims at the middle, 147.5 °C
    expect(fake.sends[0].cmd).toMatchObject({ type: 'setpoint', setpointC: 147.5 });
    expect(fake.setpointC).toBe(147.5);
  });

  it('the chamber below the stress temperature (a minimum, 145 °C) keeps it heating; the first sample in band (145–150 °C) starts stress; bias goes on', async () => {
    await land([100, 120, 140]);
    await step(scheduler);
    expect((await run()).state).toBe('heating');
    await land([145]);
    await step(scheduler);
    const r = await run();
    expect(r).toMatchObject({ state: 'stressing', accruedToSeq: 4, stressHours: 0 });
    expect(r.ambientReachedAt).not.toBeNull();
    expect(fake.sends[1].cmd).toMatchObject({ type: 'bias', on: true, sockets: [0, 1, 2], vV: 112 });
  });

  it('accrues from the stored telemetry: out-of-band and unbiased intervals do not count, a tripped socket stops; read point 4 h → hold, cooling under bias', async () => {
    // seq 5…23: chamber 150.5 °C (above the band's 150) at seq 15; socket 2 trips at seq 12.
    for (let s = 5; s <= 23; s++) {
      if (s === 12) fake.trip(2);
      await land([s === 15 ? 150.5 : 145]);
    }
    await step(scheduler);
    const r = await run();
    // Intervals 5→6 … 22→23 (18) minus 14→15 and 15→16 = 16 × 0.25 h; 4→5 had no bias yet.
    expect(r).toMatchObject({ state: 'read-hold', stressHours: 4, accruedToSeq: 23, nextReadPoint: 2, holdPhase: 'cool-under-bias' });
    expect(r.biasRemovedAt).toBeNull();
    expect(await socketHours()).toEqual({ 0: 4, 1: 4, 2: 1.5 });
    const tripped = await t.ctx.ds.getRepository(RunSocketEntity).findOneByOrFail({ runId, socketIndex: 2 });
    expect(tripped.tripped).toBe(true);
    // The chamber cools first; bias stays on [pub: MIL-M-38510/757C §4.5.2 — cool under bias].
    expect(fake.sends.slice(2).map((x) => x.cmdId)).toEqual([`run:${runId}:cool:rp1`]);
    expect(fake.sends[2].cmd).toMatchObject({ type: 'setpoint', setpointC: 25 });
    expect(events.filter((e) => e.type === 'read-point-due')).toEqual([]);
  });

  it('the hold removes bias only at the lab\'s "remove bias at" temperature (35 °C by default); then the 96 h window starts', async () => {
    await land([40]);
    await step(scheduler);
    expect(await run()).toMatchObject({ holdPhase: 'cool-under-bias', biasRemovedAt: null });
    expect(fake.sends).toHaveLength(3);
    expect([...fake.bias.values()].filter((b) => b.on)).toHaveLength(2); // sockets 0 and 1 still biased (2 tripped)
    await land([35]);
    await step(scheduler);
    const r = await run();
    expect(r.holdPhase).toBe('safe-to-open'); // 35 °C is also below the 40 °C safe-to-open default
    expect(r.biasRemovedAt).not.toBeNull();
    expect(fake.sends.slice(3).map((x) => x.cmdId)).toEqual([`run:${runId}:off:rp1`]);
    expect(fake.sends[3].cmd).toMatchObject({ type: 'bias', on: false, sockets: [0, 1, 2] });
    const phases = await t.ctx.ds
      .getRepository(AuditLogEntity)
      .find({ where: { entityId: runId, action: 'run.hold-phase' }, order: { id: 'ASC' } });
    expect(phases.map((a) => [a.details.from, a.details.to, a.details.chamberC])).toEqual([['cool-under-bias', 'safe-to-open', 35]]);
    const due = events.filter((e) => e.type === 'read-point-due');
    expect(due).toEqual([
      expect.objectContaining({ runId, rigCode: 'OV-01', readPointH: 4, readPointIndex: 1, stressHours: 4, final: false }),
    ]);
    const d = due[0] as Extract<RunEvent, { type: 'read-point-due' }>;
    expect(Date.parse(d.measureBy) - Date.parse(d.biasRemovedAt)).toBe(96 * 3_600_000);
  });

  // [pub: JESD22-A108, as cited in server/modules/runs/run-events.ts — wording not checked] electrical
  // tests within 96 h of removing bias. 95 h after: nothing; 97 h after: one event, one audit row,
  // one alarm; later passes repeat nothing; leaving the hold clears the alarm.
  it('a read point still unmeasured 96 h after bias came off: one overdue event and alarm, cleared when the hold ends', async () => {
    const r = await run();
    const off = r.biasRemovedAt!.getTime();
    const realNow = t.ctx.now;
    const overdue = () => events.filter((e) => e.type === 'read-point-overdue');
    try {
      t.ctx.now = () => new Date(off + 95 * 3_600_000);
      await step(scheduler);
      expect(overdue()).toHaveLength(0);
      t.ctx.now = () => new Date(off + 97 * 3_600_000);
      await step(scheduler);
      await step(scheduler);
      expect(overdue()).toEqual([
        expect.objectContaining({
          runId,
          rigCode: 'OV-01',
          readPointH: 4,
          final: false,
          biasRemovedAt: r.biasRemovedAt!.toISOString(),
          measureBy: new Date(off + 96 * 3_600_000).toISOString(),
          overdueH: 1,
        }),
      ]);
      expect(await t.ctx.ds.getRepository(AuditLogEntity).countBy({ entityId: runId, action: 'run.read-point-overdue' })).toBe(1);
      // A scheduler started afresh (a restart) does not report the same hold again. (No rig link: the
      // fake rig's command log is the later tests' evidence.)
      const again = new RunScheduler(t.ctx, {
        rigLink: () => undefined,
        cronExpression: null,
        listen: false,
        ambientCheckEveryMs: 0,
        overdueCheckEveryMs: 0,
        log: () => undefined,
      });
      await step(again);
      await again.stop();
      expect(overdue()).toHaveLength(1);
    } finally {
      t.ctx.now = realNow;
    }
    await handleRunEvent(t.ctx, overdue()[0]);
    const alarm = await t.ctx.ds.getRepository(AlarmEntity).findOneByOrFail({ kind: 'read-point-overdue', runId });
    expect(alarm).toMatchObject({
      severity: 'warning',
      rigId,
      title: expect.stringContaining('read point 4.0 h not measured within 96 h'),
      clearedAt: null,
    });
    await handleRunEvent(t.ctx, {
      type: 'state-changed',
      runId,
      runCode: r.code,
      rigId,
      rigCode: 'OV-01',
      at: new Date().toISOString(),
      from: 'read-hold',
      to: 'heating',
      actor: 'operator',
      reason: null,
    });
    expect((await t.ctx.ds.getRepository(AlarmEntity).findOneByOrFail({ id: alarm.id })).clearedAt).not.toBeNull();
  });

  it('nothing accrues during the hold; measurements done → heating again with a new set-point command', async () => {
    // (The hold's two samples above, 40 and 35 °C, carried bias on sockets 0 and 1.)
    await step(scheduler);
    expect((await run()).stressHours).toBe(4);
    const op = await t.signIn('operator');
    const res = await op.post(`/api/runs/${runId}/measurements-done`).send({ rowVersion: (await run()).rowVersion });
    expect(res.body.state).toBe('heating');
    await step(scheduler);
    expect(fake.sends).toHaveLength(5);
    expect(fake.sends[4].cmd).toMatchObject({ type: 'setpoint', setpointC: 147.5 });
    expect(fake.sends[4].cmdId).not.toBe(fake.sends[0].cmdId);
  });

  it('ambient not reached within 5 stress-clock hours of heating: one run-event and one audit row', async () => {
    await land(Array(19).fill(100)); // 19 × 0.25 h = 4.75 h since the heating boundary (seq 25)
    await step(scheduler);
    expect(events.filter((e) => e.type === 'ambient-not-reached')).toHaveLength(0);
    await land([100, 100]); // 5.25 h
    await step(scheduler);
    await step(scheduler);
    const late = events.filter((e) => e.type === 'ambient-not-reached');
    expect(late).toEqual([
      expect.objectContaining({ runId, elapsedStressH: 5.25, limitH: 5, setC: 145, lowC: 145, highC: 150, lastChamberC: 100 }),
    ]);
    expect(await t.ctx.ds.getRepository(AuditLogEntity).countBy({ entityId: runId, action: 'run.ambient-overdue' })).toBe(1);
  });

  it('reaches ambient, stresses; a restarted scheduler continues with exact hours and sends nothing again', async () => {
    await land([145]); // seq 47: ambient
    await step(scheduler);
    expect((await run()).state).toBe('stressing');
    expect(fake.sends[5].cmd).toMatchObject({ type: 'bias', on: true, sockets: [0, 1] }); // the tripped socket stays off
    await land(Array(8).fill(145)); // seq 48…55: 47→48 unbiased, then 7 intervals
    await step(scheduler);
    expect((await run()).stressHours).toBe(5.75);

    const sent = fake.sends.length;
    await scheduler.stop();
    scheduler = new RunScheduler(t.ctx, {
      rigLink: () => fake,
      cronExpression: null,
      listen: false,
      ambientCheckEveryMs: 0,
      overdueCheckEveryMs: 0,
      log: () => undefined,
    });
    await step(scheduler);
    expect(fake.sends.length).toBe(sent); // the rig already reports set point and bias: nothing to repeat
    expect((await run()).stressHours).toBe(5.75);
    expect(await socketHours()).toEqual({ 0: 5.75, 1: 5.75, 2: 1.5 });
  });

  // Issue #19: device-hours come from each socket's own accrual, not from n × the read point.
  it("the sample evidence gives each device its credited hours: the tripped socket's device stopped at its trip", async () => {
    const r = await run();
    expect(r.sampleId).not.toBeNull();
    const res = await (await t.signIn('manager')).get(`/api/evidence/samples/${r.sampleId}`);
    expect(res.status).toBe(200);
    const hours = Object.fromEntries(res.body.devices.map((d: { serial: string; creditedHours: number }) => [d.serial, d.creditedHours]));
    expect(hours).toEqual({ A0001: 5.75, A0002: 5.75, A0003: 1.5 });
    expect(res.body.devices.find((d: { serial: string }) => d.serial === 'A0003')).toMatchObject({ tripped: true, socketIndex: 2 });
    expect(res.body).toMatchObject({ plannedSize: 3, bookedSize: 3, loadedSize: 3, deviation: null });
  });

  it('a rig reboot (clock back to 0) accrues nothing for that step; at 10 h the run cools and finishes', async () => {
    await land(Array(19).fill(145), { reboot: true }); // seq 56 (clock 0) … 74
    await step(scheduler);
    const r = await run();
    // 55→56 reboot: 0; 56→57 … 72→73: 17 × 0.25 = 4.25 h → 10 h exactly at seq 73.
    expect(r).toMatchObject({ state: 'cooling', stressHours: 10, accruedToSeq: 73, nextReadPoint: 3 });
    expect(await socketHours()).toEqual({ 0: 10, 1: 10, 2: 1.5 });
    expect(fake.sends.slice(-1).map((x) => x.cmdId)).toEqual([`run:${runId}:cool:end`]);
    expect(events.filter((e) => e.type === 'read-point-due').pop()).toMatchObject({ readPointH: 4, final: false });
    await land([80]);
    await step(scheduler);
    expect(await run()).toMatchObject({ state: 'cooling', holdPhase: 'cool-under-bias', biasRemovedAt: null }); // bias on, still too hot
    await land([34]);
    await step(scheduler);
    expect(fake.sends.slice(-1).map((x) => x.cmdId)).toEqual([`run:${runId}:off:end`]);
    expect(events.filter((e) => e.type === 'read-point-due').pop()).toMatchObject({ readPointH: 10, readPointIndex: 2, final: true });
    await step(scheduler); // the bias-off command is acknowledged: safe to open → finished
    const done = await run();
    expect(done.state).toBe('finished');
    expect(done.finishedAt).not.toBeNull();
  });

  it('after the run finished the tripped device still holds its 1.5 h; the others the full 10 h', async () => {
    const r = await run();
    const res = await (await t.signIn('engineer')).get(`/api/evidence/samples/${r.sampleId}`);
    const hours = Object.fromEntries(res.body.devices.map((d: { serial: string; creditedHours: number }) => [d.serial, d.creditedHours]));
    expect(hours).toEqual({ A0001: 10, A0002: 10, A0003: 1.5 });
  });

  it('no command was ever applied twice, and every state change is in the audit trail', async () => {
    const ids = fake.sends.map((x) => x.cmdId);
    expect(new Set(ids).size).toBe(ids.length);
    expect(ids).toHaveLength(8);
    const trail = await t.ctx.ds.getRepository(AuditLogEntity).find({ where: { entity: 'run', entityId: runId }, order: { id: 'ASC' } });
    expect(trail.map((a) => `${a.actor}:${a.action}`)).toEqual([
      'engineer@test.example:run.book',
      'operator@test.example:run.load',
      'operator@test.example:run.start',
      'system:run.ambient-reached',
      'system:run.read-point',
      'system:run.hold-phase',
      'system:run.read-point-overdue',
      'operator@test.example:run.measurements-done',
      'system:run.ambient-overdue',
      'system:run.ambient-reached',
      'system:run.stress-complete',
      'system:run.hold-phase',
      'system:run.finish',
    ]);
    expect(events.filter((e) => e.type === 'state-changed').map((e) => (e as { to: string }).to)).toEqual([
      'loading',
      'heating',
      'stressing',
      'read-hold',
      'heating',
      'stressing',
      'cooling',
      'finished',
    ]);
  });
});

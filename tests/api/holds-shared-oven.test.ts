/**
 * Two runs in one oven (the scheduler through a fake RigLink, telemetry rows written as ingest would):
 * when run A reaches its read point while run B still needs the chamber hot, A's hold waits with its
 * parts biased at the chamber's temperature (never unbiased and hot), its hours are not credited
 * meanwhile, and its measurements are refused while still biased. When B reaches its own read point
 * the oven is free: both cool under bias and then remove bias (shared/holds, "oven-shared").
 */
import { randomUUID } from 'node:crypto';
import type { CommandAck } from '../../shared/mqtt';
import {
  AuditLogEntity,
  DeviceEntity,
  DeviceTypeEntity,
  LotEntity,
  RigEntity,
  RunEntity,
  RunSocketEntity,
  StressPlanEntity,
} from '../../server/db/entities';
import { RunScheduler } from '../../server/modules/scheduler/scheduler';
import type { RigCommandBody, RigLink } from '../../server/modules/telemetry/contracts';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { createTestApp, type TestApp } from '../support/api';
import { chamberSetpointC } from '../../shared/domain/standards';

class FakeRig implements RigLink {
  setpointC = 145;
  bias = new Map<number, boolean>([0, 1, 2, 3].map((k) => [k, true]));
  readonly sends: Array<{ cmdId: string; cmd: RigCommandBody }> = [];
  connected() {
    return true;
  }
  async send(rigCode: string, cmd: RigCommandBody, opts?: { cmdId?: string }): Promise<CommandAck> {
    const cmdId = opts?.cmdId ?? 'anon';
    this.sends.push({ cmdId, cmd });
    if (cmd.type === 'setpoint') this.setpointC = cmd.setpointC;
    if (cmd.type === 'bias') for (const k of cmd.sockets === 'all' ? [0, 1, 2, 3] : cmd.sockets) this.bias.set(k, cmd.on);
    return { v: 1, rig: rigCode, cmdId, ok: true };
  }
}

let t: TestApp;
let rigId: string;
const ids: Record<'A' | 'B', string> = { A: '', B: '' };
const fake = new FakeRig();
let scheduler: RunScheduler;
let seq = 0;
let heldAtStartC = 0;

async function land(chambers: number[]) {
  for (const c of chambers) {
    seq += 1;
    await t.ctx.ds.query(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c) VALUES ($1, $2, now(), $3, $4, null, $5)`,
      [rigId, seq, seq * 900, c, fake.setpointC],
    );
    for (const k of [0, 1, 2, 3]) {
      const on = fake.bias.get(k) === true;
      await t.ctx.ds.query(
        `INSERT INTO telemetry_samples (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped) VALUES ($1, $2, $3, $4, $5, $6, $7, false)`,
        [rigId, seq, k, c + 1, on ? 112 : 0, on ? 2e-8 : 0, on],
      );
    }
  }
}
const step = async () => {
  await scheduler.pass();
  await scheduler.idle();
};
const run = (k: 'A' | 'B') => t.ctx.ds.getRepository(RunEntity).findOneByOrFail({ id: ids[k] });
const sentFor = (k: 'A' | 'B') =>
  fake.sends.filter((x) => x.cmdId.startsWith(`run:${ids[k]}:`)).map((x) => x.cmdId.split(':').slice(2).join(':'));

jest.setTimeout(30_000);

beforeAll(async () => {
  t = await createTestApp();
  const m = t.ctx.ds.manager;
  rigId = (
    await m.save(
      m.create(RigEntity, {
        code: 'OV-02',
        name: 'Oven 2',
        socketCount: 4,
        maxTempC: 200,
        maxVoltageV: 800,
        mqttUsername: 'rig-ov-02',
        mqttSecretHash: 'x',
        credentialsIssuedAt: new Date(),
        online: true,
      }),
    )
  ).id;
  const type = await m.save(
    m.create(
      DeviceTypeEntity,
      DEMO_DEVICE_TYPES.find((d) => d.partNumber === 'HPD-2N140')!,
    ),
  );
  const lot = await m.save(m.create(LotEntity, { code: 'HG2611-S', deviceTypeId: type.id, quantity: 100 }));
  const devices = await m.save(['S0001', 'S0002', 'S0003', 'S0004'].map((serial) => m.create(DeviceEntity, { lotId: lot.id, serial })));
  for (const [k, readPointsH, sockets] of [
    ['A', [0, 1, 10], [0, 1]],
    ['B', [0, 2, 10], [2, 3]],
  ] as const) {
    const plan = await m.save(
      m.create(StressPlanEntity, {
        planKey: randomUUID(),
        version: 1,
        name: `HTRB 145 °C shared ${k}`,
        kind: 'htrb',
        deviceTypeId: type.id,
        chamberC: 145,
        humidityPct: null,
        bias: { vcbV: 112, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
        durationH: 10,
        readPointsH: [...readPointsH],
        sampleSize: 2,
        acceptNumber: 0,
        criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 2e-7, vcesatShiftV: 0.05 },
      }),
    );
    // The rig already sits at the plans' controller set point (the middle of the chamber band).
    fake.setpointC = chamberSetpointC(plan.chamberC, plan.chamberBand);
    const now = new Date();
    ids[k] = (
      await m.save(
        m.create(RunEntity, {
          code: `HTRB-2611-S${k}`,
          planId: plan.id,
          rigId,
          state: 'stressing',
          sampleSize: 2,
          stateChangedAt: now,
          startedAt: now,
          heatingSince: now,
          ambientReachedAt: now,
          nextReadPoint: 1,
          scheduledStart: now,
          scheduledEnd: new Date(now.getTime() + 3_600_000),
        }),
      )
    ).id;
    await m.insert(
      RunSocketEntity,
      sockets.map((s) => ({ runId: ids[k], deviceId: devices[s].id, socketIndex: s })),
    );
  }
  heldAtStartC = fake.setpointC;
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

describe('a read-point hold in a shared oven', () => {
  it('A reaches its read point while B stresses: A waits biased at 145 °C, the chamber untouched, nothing sent for A', async () => {
    await land([145, 145, 145, 145, 145, 145]); // 5 intervals × 0.25 h
    await step();
    const a = await run('A');
    expect(a).toMatchObject({ state: 'read-hold', holdPhase: 'oven-shared', biasRemovedAt: null, stressHours: 1 });
    expect((await run('B')).state).toBe('stressing');
    expect(sentFor('A')).toEqual([]);
    expect(fake.setpointC).toBe(heldAtStartC);
    expect([fake.bias.get(0), fake.bias.get(1)]).toEqual([true, true]);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ entityId: ids.A, action: 'run.hold-phase' });
    expect(audit.reason).toBe('The oven is kept hot for HTRB-2611-SB: the hold waits under bias.');
    expect(audit.details).toMatchObject({ from: 'cool-under-bias', to: 'oven-shared', ovenKeptHotFor: ['HTRB-2611-SB'] });
  });

  it('measurements are refused while A is still biased; the run page says why', async () => {
    const op = await t.signIn('operator');
    const res = await op.post(`/api/runs/${ids.A}/measurements-done`).send({ rowVersion: (await run('A')).rowVersion });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe(
      'Run HTRB-2611-SA is still under bias (held hot: the oven is shared with a run under stress); measure after bias comes off.',
    );
    const view = await op.get(`/api/runs/${ids.A}`);
    expect(view.body).toMatchObject({ state: 'read-hold', holdPhase: 'oven-shared' });
  });

  it('while A waits its hours are not credited; when B reaches its read point both cool under bias, then remove bias', async () => {
    await land([145, 145, 145, 145]); // B: 1 h + 4 × 0.25 = 2 h → its read point
    await step();
    await step(); // runs are driven in turn: A (driven first) sees the free oven on the next pass
    expect(await run('A')).toMatchObject({ stressHours: 1, holdPhase: 'cool-under-bias' });
    expect(await run('B')).toMatchObject({ state: 'read-hold', stressHours: 2, holdPhase: 'cool-under-bias' });
    expect(sentFor('A')).toEqual(['cool:rp1']);
    expect(sentFor('B')).toEqual(['cool:rp1']);
    expect(fake.setpointC).toBe(25);
    expect([...fake.bias.values()]).toEqual([true, true, true, true]);
    await land([90, 34]);
    await step();
    for (const k of ['A', 'B'] as const) {
      const r = await run(k);
      expect(r.holdPhase).toBe('safe-to-open');
      expect(r.biasRemovedAt).not.toBeNull();
      expect(sentFor(k)).toEqual(['cool:rp1', 'off:rp1']);
    }
    expect([...fake.bias.values()]).toEqual([false, false, false, false]);
  });
});

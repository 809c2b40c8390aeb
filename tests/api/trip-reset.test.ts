/**
 * POST /api/runs/:id/sockets/:socket/reset-trip: an operator or engineer resets a protection trip
 * with a reason; the plan check runs again for the device in that socket and must not block; the
 * reset is audited with the numbers; the rig gets `reset-trip` and then a bias command for that
 * socket alone. A fake RigLink plays the rig (tests/broker/protection-fixtures.ts).
 */
import { AuditLogEntity, DeviceEntity, DeviceTypeEntity, LotEntity, RunSocketEntity } from '../../server/db/entities';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';
import { FakeRigLink, createRunFixture, type RunFixture } from '../broker/protection-fixtures';

let t: TestApp;
let link: FakeRigLink;
let fx: RunFixture;

const url = (runId: string, socket: number | string) => `/api/runs/${runId}/sockets/${socket}/reset-trip`;
const REASON = 'Thermal pad replaced and clamp torque checked on socket 2';

async function trip(socket: number): Promise<void> {
  await t.ctx.ds
    .getRepository(RunSocketEntity)
    .update(
      { runId: fx.run.id, socketIndex: socket },
      { tripped: true, trippedAt: new Date(), tripReason: 'Tj 147.0 °C (max 150.0 °C) rising with loop gain 1.30 ≥ 1: thermal runaway' },
    );
}

beforeAll(async () => {
  t = await createTestApp();
  link = new FakeRigLink();
  t.ctx.services.rigLink = link;
  // HTRB at 160 V on a 250 V part at 125 °C: the plan check passes.
  fx = await createRunFixture(t.ctx.ds, { rigCode: 'OV-21', sockets: 4, kind: 'htrb', chamberC: 125 });
});

afterAll(async () => {
  await t?.close();
});

describe('trip reset', () => {
  test('bad input gets a clear error and changes nothing', async () => {
    await trip(2);
    const agent = await t.signIn('operator');
    const before = await tableCounts(t.ctx.ds);
    const short = await agent.post(url(fx.run.id, 2)).send({ reason: 'ok now' });
    expect(short.status).toBe(400);
    expect(short.body.error.fields.reason[0]).toMatch(/at least 10 characters/);
    const noReason = await agent.post(url(fx.run.id, 2)).send({});
    expect(noReason.status).toBe(400);
    const badSocket = await agent.post(url(fx.run.id, 'x')).send({ reason: REASON });
    expect(badSocket.status).toBe(400);
    expect(badSocket.body.error.fields.socket[0]).toMatch(/whole|number/i);
    const badRun = await agent.post(url('not-a-run', 2)).send({ reason: REASON });
    expect(badRun.status).toBe(400);
    const notTripped = await agent.post(url(fx.run.id, 1)).send({ reason: REASON });
    expect(notTripped.status).toBe(409);
    expect(notTripped.body.error.message).toBe(`Socket 1 of OV-21 (run ${fx.run.code}) is not tripped.`);
    const empty = await agent.post(url(fx.run.id, 9)).send({ reason: REASON });
    expect(empty.status).toBe(422);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect(link.sent).toEqual([]);
    const row = await t.ctx.ds.getRepository(RunSocketEntity).findOneByOrFail({ runId: fx.run.id, socketIndex: 2 });
    expect(row.tripped).toBe(true);
  });

  test('a manager may not reset a trip', async () => {
    const agent = await t.signIn('manager');
    const res = await agent.post(url(fx.run.id, 2)).send({ reason: REASON });
    expect(res.status).toBe(403);
  });

  test('an operator resets a trip: latch cleared, audited with the numbers, rig told to reset and re-energise that socket', async () => {
    const agent = await t.signIn('operator');
    const res = await agent.post(url(fx.run.id, 2)).send({ reason: REASON });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      runCode: fx.run.code,
      rigCode: 'OV-21',
      socket: 2,
      serial: fx.devices[2].serial,
      rig: { resetTrip: { status: 'confirmed' }, bias: { status: 'confirmed' } },
    });
    expect(['ok', 'warn']).toContain(res.body.planCheck.status);
    const row = await t.ctx.ds.getRepository(RunSocketEntity).findOneByOrFail({ runId: fx.run.id, socketIndex: 2 });
    expect(row.tripped).toBe(false);
    expect(row.tripReason).toBeNull();
    // The rig: clear the latch first, then bias socket 2 alone at the plan's 160 V (no current for reverse bias).
    expect(link.sent.map((c) => c.command)).toEqual([
      { type: 'reset-trip', socket: 2 },
      { type: 'bias', sockets: [2], on: true, vV: 160 },
    ]);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'socket.trip-reset', entityId: fx.run.id });
    expect(audit.reason).toBe(REASON);
    expect(audit.actor).toBe('operator@test.example');
    expect(audit.details).toMatchObject({
      socket: 2,
      rigCode: 'OV-21',
      tripReason: expect.stringMatching(/loop gain 1\.30/),
      planCheck: { status: expect.stringMatching(/^(ok|warn)$/) },
    });
    expect(typeof audit.details.planCheck.derived.tjC).toBe('number');
    // A second reset of the same socket: it is no longer tripped.
    const again = await agent.post(url(fx.run.id, 2)).send({ reason: REASON });
    expect(again.status).toBe(409);
  });

  test('a reset that fails the plan re-check for the device in that socket is refused and changes nothing', async () => {
    // Socket 3 holds a device of a part rated BVCBO 150 V: the plan's 160 V reverse bias blocks.
    const m = t.ctx.ds.manager;
    const weak = await m.save(
      m.create(DeviceTypeEntity, { ...fx.deviceType, id: undefined, partNumber: 'HPD-T150W', bvcboV: 150, bvceoV: 100 }),
    );
    const lot = await m.save(m.create(LotEntity, { code: 'HPD-L-WEAK', deviceTypeId: weak.id, quantity: 1 }));
    const dev = await m.save(m.create(DeviceEntity, { lotId: lot.id, serial: 'HPD-WEAK-001' }));
    await m.update(RunSocketEntity, { runId: fx.run.id, socketIndex: 3 }, { deviceId: dev.id });
    await trip(3);
    link.sent.length = 0;
    const agent = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await agent.post(url(fx.run.id, 3)).send({ reason: 'Checked the board, looks fine to run again' });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/^The plan check blocks energising socket 3 again \(HPD-T150W\): .+ the trip stays\.$/);
    expect(res.body.error.findings.some((f: { severity: string }) => f.severity === 'block')).toBe(true);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect(link.sent).toEqual([]);
    const row = await m.getRepository(RunSocketEntity).findOneByOrFail({ runId: fx.run.id, socketIndex: 3 });
    expect(row.tripped).toBe(true);
  });

  test('a run that is not stressing is refused', async () => {
    const paused = await createRunFixture(t.ctx.ds, { rigCode: 'OV-22', sockets: 2, kind: 'htrb', chamberC: 125, state: 'paused' });
    await t.ctx.ds.getRepository(RunSocketEntity).update({ runId: paused.run.id, socketIndex: 0 }, { tripped: true });
    const agent = await t.signIn('engineer');
    const res = await agent.post(url(paused.run.id, 0)).send({ reason: REASON });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/is paused: a trip is reset while the run is stressing/);
  });
});

/**
 * Condition alarms raised by live protection and by run events: chamber out of band, bias out of
 * tolerance, leakage jump, rig offline, an unconfirmed trip, ambient-not-reached, read-point-due
 * notices and e-mail. Telemetry goes in through ctx.events (TELEMETRY_LANDED) with a fake RigLink;
 * mail lands in the local fake SMTP server.
 */
import type { TelemetryLanded } from '../../server/modules/telemetry/contracts';
import { RIG_STATUS_CHANGED, TELEMETRY_LANDED } from '../../server/modules/telemetry/contracts';
import { socketColumns, type SocketReading } from '../../shared/mqtt';
import { AlarmEntity, NotificationEntity, UserEntity } from '../../server/db/entities';
import { startMailSink, type MailSink } from '../../server/mail-sink/mail-sink';
import { emitRunEvent } from '../../server/modules/runs/run-events';
import { startProtectionFeature, type ProtectionFeature } from '../../server/modules/protection/start';
import { createTestApp, emailFor, type TestApp } from '../support/api';
import { FakeRigLink, createRunFixture, type RunFixture } from './protection-fixtures';

let t: TestApp;
let sink: MailSink;
let feature: ProtectionFeature;
const link = new FakeRigLink();
let seq = 0;

beforeAll(async () => {
  sink = await startMailSink({ port: 0 });
  t = await createTestApp({ smtp: { host: '127.0.0.1', port: sink.port, from: 'Emberlot <emberlot@harrowgate-lab.example>' } });
  t.ctx.services.rigLink = link;
  feature = await startProtectionFeature(t.ctx, { mail: { attempts: 2, backoffMs: 10 } });
});

afterAll(async () => {
  await feature?.stop();
  await t?.close();
  await sink?.close();
});

describe('condition alarms', () => {
  const landed = (fx: RunFixture, tS: number, chamberC: number, sockets: SocketReading[]): TelemetryLanded => ({
    rigId: fx.rig.id,
    rigCode: fx.rig.code,
    seq: ++seq,
    ts: new Date(Date.UTC(2031, 2, 4) + tS * 1000),
    stressClockS: tS,
    chamberC,
    humidityPct: null,
    setpointC: fx.plan.chamberC,
    ...socketColumns(sockets),
  });
  const live = (rigId: string, kind: AlarmEntity['kind']) =>
    t.ctx.ds.getRepository(AlarmEntity).find({ where: { rigId, kind }, order: { raisedAt: 'ASC' } });

  it('chamber out of its ±3 % band while stressing: one alarm, cleared on return, re-activated (not duplicated) on a repeat', async () => {
    const fx = await createRunFixture(t.ctx.ds, { rigCode: 'AB-01', sockets: 1, chamberC: 125, bias: { vceV: 10, ibA: 0.001 } });
    const s = (caseC: number) => [{ i: 0, caseC, vV: 10, iA: 0.12, biasOn: true, tripped: false }];
    let tS = 0;
    const feed = async (chamberC: number, n: number) => {
      for (let k = 0; k < n; k++) t.ctx.events.emit(TELEMETRY_LANDED, landed(fx, (tS += 5), chamberC, s(chamberC + 2)));
      await feature.idle();
    };
    await feed(125.5, 5); // in band (±3.75 °C)
    expect(await live(fx.rig.id, 'ambient-out-of-band')).toHaveLength(0);
    await feed(120.0, 1); // one sample out: debounced
    expect(await live(fx.rig.id, 'ambient-out-of-band')).toHaveLength(0);
    await feed(119.5, 6);
    let rows = await live(fx.rig.id, 'ambient-out-of-band');
    expect(rows).toHaveLength(1);
    expect(rows[0].severity).toBe('warning');
    expect(rows[0].message).toMatch(/reads 119\.5 °C; run R-AB-01-\d+ holds 125\.0 °C ± 3\.8 °C/);
    await feed(125, 3);
    rows = await live(fx.rig.id, 'ambient-out-of-band');
    expect(rows[0].clearedAt).toBeInstanceOf(Date);
    expect(rows[0].acknowledgedAt).toBeNull(); // stays until acknowledged
    await feed(131, 3);
    rows = await live(fx.rig.id, 'ambient-out-of-band');
    expect(rows).toHaveLength(1);
    expect(rows[0].clearedAt).toBeNull();
    expect(rows[0].details.occurrences).toBe(2);
  });

  it('bias out of tolerance (measured vs plan) on one socket only', async () => {
    const fx = await createRunFixture(t.ctx.ds, {
      rigCode: 'BT-01',
      sockets: 2,
      chamberC: 100,
      bias: { vceV: 20, ibA: 0.0015, tolerancePct: 5 },
    });
    for (let k = 1; k <= 4; k++) {
      t.ctx.events.emit(
        TELEMETRY_LANDED,
        landed(fx, 5 * k, 100, [
          { i: 0, caseC: 104, vV: 19.8, iA: 0.17, biasOn: true, tripped: false },
          { i: 1, caseC: 104, vV: 17.9, iA: 0.16, biasOn: true, tripped: false },
        ]),
      );
    }
    await feature.idle();
    const rows = await live(fx.rig.id, 'bias-out-of-tolerance');
    expect(rows).toHaveLength(1);
    expect(rows[0].socketIndex).toBe(1);
    expect(rows[0].message).toMatch(/reads 17\.9 V VCE against the plan's 20 V \(± 5 %\): 10\.5 % low/);
  });

  it('leakage jump under reverse bias beyond the temperature effect', async () => {
    const fx = await createRunFixture(t.ctx.ds, { rigCode: 'LJ-01', sockets: 2, kind: 'htrb', chamberC: 125, bias: { vcbV: 160 } });
    const currents = [2.0e-6, 2.02e-6, 2.05e-6, 6.1e-5, 6.3e-5];
    currents.forEach((i, k) =>
      t.ctx.events.emit(
        TELEMETRY_LANDED,
        landed(fx, 5 * (k + 1), 125, [
          { i: 0, caseC: 125.4, vV: 160, iA: 2e-6 * (1 + 0.001 * k), biasOn: true, tripped: false },
          { i: 1, caseC: 125.4, vV: 160, iA: i, biasOn: true, tripped: false },
        ]),
      ),
    );
    await feature.idle();
    const rows = await live(fx.rig.id, 'leakage-jump');
    expect(rows).toHaveLength(1);
    expect(rows[0].socketIndex).toBe(1);
    expect(rows[0].message).toMatch(/rose from 2\.05 µA to 61\.0 µA/);
    expect(rows[0].clearedAt).toBeNull();
  });

  it('rig offline while a run is active → critical alarm, cleared when it is back; no alarm without a run', async () => {
    const fx = await createRunFixture(t.ctx.ds, { rigCode: 'OF-01', sockets: 1 });
    const idle = await createRunFixture(t.ctx.ds, { rigCode: 'OF-02', sockets: 1, state: 'finished' });
    t.ctx.events.emit(RIG_STATUS_CHANGED, { rigId: fx.rig.id, rigCode: fx.rig.code, online: false, at: new Date() });
    t.ctx.events.emit(RIG_STATUS_CHANGED, { rigId: idle.rig.id, rigCode: idle.rig.code, online: false, at: new Date() });
    await feature.idle();
    let rows = await live(fx.rig.id, 'rig-offline');
    expect(rows).toHaveLength(1);
    expect(rows[0].severity).toBe('critical');
    expect(rows[0].message).toMatch(/OF-01 went offline at .* while run R-OF-01-\d+ was stressing/);
    expect(await live(idle.rig.id, 'rig-offline')).toHaveLength(0);
    // A repeat of the same report does not add a second alarm.
    t.ctx.events.emit(RIG_STATUS_CHANGED, { rigId: fx.rig.id, rigCode: fx.rig.code, online: false, at: new Date() });
    await feature.idle();
    expect(await live(fx.rig.id, 'rig-offline')).toHaveLength(1);
    t.ctx.events.emit(RIG_STATUS_CHANGED, { rigId: fx.rig.id, rigCode: fx.rig.code, online: true, at: new Date() });
    await feature.idle();
    rows = await live(fx.rig.id, 'rig-offline');
    expect(rows[0].clearedAt).toBeInstanceOf(Date);
  });

  it('a trip the rig does not confirm says so, and is re-sent (same cmdId) while the socket stays energised', async () => {
    const fx = await createRunFixture(t.ctx.ds, { rigCode: 'NC-01', sockets: 1, chamberC: 100 });
    link.unreachable.add('NC-01');
    const hot = [{ i: 0, caseC: 139, vV: 20, iA: 0.6, biasOn: true, tripped: false }]; // Tj ≈ 139 + 1.5·12 = 157 °C
    t.ctx.events.emit(TELEMETRY_LANDED, landed(fx, 5, 100, hot));
    await feature.idle();
    let [a] = await live(fx.rig.id, 'runaway-trip');
    expect(a.message).toMatch(/The rig did not confirm the trip \(.*\), so the socket may still be energised\.$/);
    expect(a.message).not.toContain('trip:NC-01'); // the command's internal id stays in the details
    expect(a.details.action).toMatch(/^Remove bias from socket 0 at NC-01 now/);
    expect(a.details.command).toBe('not confirmed');
    link.unreachable.delete('NC-01');
    t.ctx.events.emit(TELEMETRY_LANDED, landed(fx, 10, 100, hot));
    await feature.idle();
    [a] = await live(fx.rig.id, 'runaway-trip');
    expect(a.details.command).toBe('confirmed');
    expect(a.message).toMatch(/^Emberlot removed bias from socket 0 on NC-01.* The rig confirmed the trip on a later attempt\.$/);
    expect(a.details.action).toMatch(/^Leave the socket de-energised/);
    const ids = new Set(link.sent.filter((c) => c.rigCode === 'NC-01').map((c) => c.cmdId));
    expect([...ids]).toEqual([`trip:NC-01:0:${fx.run.id}`]);
    expect(await t.ctx.ds.getRepository(AlarmEntity).count({ where: { rigId: fx.rig.id } })).toBe(1);
  });
});

describe('run events', () => {
  it('ambient-not-reached raises an alarm that clears when the run reaches stressing; read-point-due notifies subscribers', async () => {
    const fx = await createRunFixture(t.ctx.ds, { rigCode: 'RE-01', sockets: 1, state: 'heating', chamberC: 150 });
    const base = { runId: fx.run.id, runCode: fx.run.code, rigId: fx.rig.id, rigCode: fx.rig.code };
    emitRunEvent(t.ctx, {
      ...base,
      type: 'ambient-not-reached',
      heatingSince: new Date().toISOString(),
      elapsedStressH: 5.2,
      limitH: 5,
      setC: 150,
      lowC: 145.5,
      highC: 154.5,
      lastChamberC: 139.2,
    });
    await feature.idle();
    const [a] = await t.ctx.ds.getRepository(AlarmEntity).find({ where: { rigId: fx.rig.id, kind: 'ambient-not-reached' } });
    expect(a.message).toMatch(/145\.5–154\.5 °C \(set 150\.0 °C\) 5\.2 stress hours after heating began/);
    emitRunEvent(t.ctx, { ...base, type: 'state-changed', from: 'heating', to: 'stressing', actor: 'system', reason: null });
    await feature.idle();
    const cleared = await t.ctx.ds.getRepository(AlarmEntity).findOneByOrFail({ id: a.id });
    expect(cleared.clearedAt).toBeInstanceOf(Date);

    await t.ctx.ds.getRepository(UserEntity).update({ email: emailFor('engineer') }, { notifyReadPoints: false });
    const before = sink.messages.length;
    emitRunEvent(t.ctx, {
      ...base,
      type: 'read-point-due',
      readPointH: 168,
      readPointIndex: 1,
      stressHours: 168.1,
      biasRemovedAt: '2031-03-10T06:00:00.000Z',
      measureBy: '2031-03-14T06:00:00.000Z',
      final: false,
    });
    await feature.idle();
    const mails = sink.messages.slice(before).filter((m) => /read point 168\.0 h due/.test(m.subject));
    expect(mails.map((m) => m.to[0]).sort()).toEqual([emailFor('admin'), emailFor('manager'), emailFor('operator')].sort());
    expect(mails[0].text).toMatch(/Measure the devices by 2031-03-14 06:00 UTC/);
    const eng = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('engineer') });
    expect(await t.ctx.ds.getRepository(NotificationEntity).count({ where: { userId: eng.id, kind: 'read-point-due' } })).toBe(0);
  });
});

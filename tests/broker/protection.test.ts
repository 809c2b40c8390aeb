/**
 * Live protection end to end inside the server: synthetic telemetry goes in through ctx.events
 * (TELEMETRY_LANDED, as the ingest emits it after commit), a fake RigLink plays the rig, the
 * database is real (cloned template), and e-mail lands in the local fake SMTP server.
 *
 * Socket physics: tests/broker/protection-fixtures.ts (Tj = T_case + θjc·P, JEDEC JESD51
 * definition; β(T) Gummel–Poon law; leakage doubling per 10 °C, common practice — shared/physics).
 * Expected outcomes below are properties of the detector (trip before Tj max; no trip on a sound
 * socket), not numbers copied from elsewhere.
 */
import { IsNull } from 'typeorm';
import { thermalOperatingPoint } from '../../shared/physics';
import { AlarmEntity, AuditLogEntity, MailLogEntity, NotificationEntity, RunSocketEntity, UserEntity } from '../../server/db/entities';
import { startMailSink, type MailSink } from '../../server/mail-sink/mail-sink';
import { startProtectionFeature, type ProtectionFeature } from '../../server/modules/protection/start';
import { tripCmdId } from '../../server/modules/protection/protection.monitor';
import { createTestApp, emailFor, type TestApp } from '../support/api';
import {
  FakeRigLink,
  HEALTHY,
  SocketSim,
  createRunFixture,
  driveTelemetry,
  type DriveSpec,
  type RigSims,
  type SentCommand,
  type SocketModel,
} from './protection-fixtures';

let t: TestApp;
let sink: MailSink;
let feature: ProtectionFeature;
/** rigCode → sims, so the fake link can de-energise the right socket. */
const rigs: RigSims = new Map();
const link = new FakeRigLink((c: SentCommand) => {
  if (c.command.type !== 'trip') return;
  rigs.get(c.rigCode)?.pending.push({ socket: c.command.socket });
});

beforeAll(async () => {
  sink = await startMailSink({ port: 0 });
  t = await createTestApp({ smtp: { host: '127.0.0.1', port: sink.port, from: 'Emberlot <emberlot@harrowgate-lab.example>' } });
  // The manager has alarm e-mails switched off: nothing may reach them.
  await t.ctx.ds.getRepository(UserEntity).update({ email: emailFor('manager') }, { notifyAlarms: false });
  t.ctx.services.rigLink = link;
  feature = await startProtectionFeature(t.ctx, { mail: { attempts: 2, backoffMs: 10 } });
});

afterAll(async () => {
  await feature?.stop();
  await t?.close();
  await sink?.close();
});

let seq = 0;
const drive = (d: Omit<DriveSpec, 'ctx' | 'feature' | 'rigs' | 'nextSeq'>) =>
  driveTelemetry({ ...d, ctx: t.ctx, feature, rigs, nextSeq: () => ++seq });

interface Variant {
  name: string;
  chamberC: number;
  kind: 'hotl' | 'htrb';
  model: SocketModel;
}

/** Six hazardous sockets: poor or degrading heat sinking, different bias, powered and reverse. */
const VARIANTS: Variant[] = [
  {
    name: 'no heat sink, 20 V / 5 mA',
    chamberC: 100,
    kind: 'hotl',
    model: { mode: 'powered', thetaJcCPerW: 1.5, thetaCaCPerW: 24, caseTauS: 120, vV: 20, ibA: 0.005 },
  },
  {
    name: 'poor heat sink 12 °C/W, 25 V / 4 mA',
    chamberC: 100,
    kind: 'hotl',
    model: { mode: 'powered', thetaJcCPerW: 1.5, thetaCaCPerW: 12, caseTauS: 90, vV: 25, ibA: 0.004 },
  },
  {
    name: 'weak heat sink 8 °C/W, 30 V / 5 mA',
    chamberC: 100,
    kind: 'hotl',
    model: { mode: 'powered', thetaJcCPerW: 1.5, thetaCaCPerW: 8, caseTauS: 150, vV: 30, ibA: 0.005 },
  },
  {
    name: 'pad drying out 2→20 °C/W over 30 min, 20 V / 5 mA',
    chamberC: 100,
    kind: 'hotl',
    model: {
      mode: 'powered',
      thetaJcCPerW: 1.5,
      thetaCaCPerW: 2,
      thetaCaRampPerS: 0.01,
      thetaCaMaxCPerW: 20,
      caseTauS: 120,
      vV: 20,
      ibA: 0.005,
    },
  },
  {
    name: 'hot chamber 110 °C, 16 °C/W, 20 V / 3 mA',
    chamberC: 110,
    kind: 'hotl',
    model: { mode: 'powered', thetaJcCPerW: 1.5, thetaCaCPerW: 16, caseTauS: 60, vV: 20, ibA: 0.003 },
  },
  {
    name: 'reverse bias 200 V, leaky die, 30 °C/W',
    chamberC: 125,
    kind: 'htrb',
    model: { mode: 'reverse', thetaJcCPerW: 1.5, thetaCaCPerW: 30, caseTauS: 120, vV: 200, iLeakRefA: 2e-6 },
  },
];

/** Peak true Tj of the variant with no protection at all (proves it is a hazard). */
function unprotectedPeak(v: Variant, durationS: number): number {
  const s = new SocketSim(v.model, v.chamberC);
  for (let tS = 0; tS < durationS && s.tjC < 400; tS += 2) s.step(2, v.chamberC);
  return s.maxTjC;
}

describe('runaway sockets are tripped before Tj max', () => {
  const margins: Array<{ variant: string; tjMaxC: number; peakTrueTjC: number; marginC: number; estimateAtTripC: number; reason: string }> =
    [];

  afterAll(() => {
    // The measured margins (°C below Tj max at trip), for the report.
    console.log(
      'Protection margins (°C below Tj max, peak true Tj incl. a 1 s command latency):\n' +
        margins
          .map(
            (m) =>
              `  ${m.variant}: peak ${m.peakTrueTjC.toFixed(1)} °C → margin ${m.marginC.toFixed(1)} °C (estimate at trip ${m.estimateAtTripC.toFixed(1)} °C) — ${m.reason}`,
          )
          .join('\n'),
    );
  });

  it.each(VARIANTS.map((v, k) => [v.name, k] as const))(
    '%s',
    async (_name, k) => {
      const v = VARIANTS[k];
      const tjMaxC = 150;
      expect(unprotectedPeak(v, 3600)).toBeGreaterThan(tjMaxC); // a real hazard without protection
      const reverse = v.kind === 'htrb';
      const fx = await createRunFixture(t.ctx.ds, {
        rigCode: `PT-0${k + 1}`,
        sockets: 3,
        kind: v.kind,
        chamberC: v.chamberC,
        bias: reverse ? { vcbV: v.model.vV } : { vceV: v.model.vV, ibA: v.model.ibA },
      });
      const healthy: SocketModel = reverse
        ? { mode: 'reverse', thetaJcCPerW: 1.5, thetaCaCPerW: 2, caseTauS: 120, vV: v.model.vV, iLeakRefA: 10e-9 }
        : { ...HEALTHY, vV: v.model.vV };
      const sims = [new SocketSim(v.model, v.chamberC), new SocketSim(healthy, v.chamberC), new SocketSim(healthy, v.chamberC)];
      await drive({ fx, sims, chamberC: v.chamberC, sampleS: 2, durationS: 3600, seed: 100 + k, latencyS: 1, watch: 0 });

      // Tripped, before the junction passed its rating.
      expect(sims[0].tripped).toBe(true);
      expect(sims[0].maxTjC).toBeLessThan(tjMaxC);
      expect(sims[1].tripped).toBe(false);
      expect(sims[2].tripped).toBe(false);

      // One trip command, with the stable cmdId.
      const trips = link.sent.filter((c) => c.rigCode === fx.rig.code && c.command.type === 'trip');
      expect(trips).toHaveLength(1);
      expect(trips[0].cmdId).toBe(`trip:${fx.rig.code}:0:${fx.run.id}`);
      expect(trips[0].cmdId).toBe(tripCmdId(fx.rig.code, 0, fx.run.id));

      // The socket map records it.
      const rs = await t.ctx.ds.getRepository(RunSocketEntity).find({ where: { runId: fx.run.id }, order: { socketIndex: 'ASC' } });
      expect(rs.map((r) => r.tripped)).toEqual([true, false, false]);
      expect(rs[0].trippedAt).toBeInstanceOf(Date);
      expect(rs[0].tripReason).toMatch(/Tj/);

      // One critical alarm with the numbers and what to do.
      const alarms = await t.ctx.ds.getRepository(AlarmEntity).find({ where: { rigId: fx.rig.id, kind: 'runaway-trip' } });
      expect(alarms).toHaveLength(1);
      const a = alarms[0];
      expect(a.severity).toBe('critical');
      expect(a.socketIndex).toBe(0);
      expect(a.runId).toBe(fx.run.id);
      expect(a.message).toMatch(/Junction estimate \d+\.\d °C against a rating of 150\.0 °C/);
      expect(a.message).toMatch(/rig confirmed the trip/);
      expect(a.details.action).toMatch(
        /Leave the socket de-energised; check heat sinking and bias before a reset; the rig's hardware interlocks remain the primary protection/,
      );
      expect(a.details).toEqual(expect.objectContaining({ tjMaxC: 150, cmdId: trips[0].cmdId, command: 'confirmed' }));
      expect(typeof a.details.tjC).toBe('number');
      expect('loopGain' in a.details && 'secondsToTjMax' in a.details).toBe(true);
      // Healthy neighbours raised nothing.
      const others = await t.ctx.ds.getRepository(AlarmEntity).find({ where: { rigId: fx.rig.id } });
      expect(others.filter((x) => x.socketIndex !== 0)).toEqual([]);
      // The warning (if one came first) was superseded.
      expect(others.filter((x) => x.kind === 'runaway-warning' && x.clearedAt === null)).toEqual([]);

      const trip = feature.monitor.tripLog.find((l) => l.rigCode === fx.rig.code)!;
      margins.push({
        variant: v.name,
        tjMaxC,
        peakTrueTjC: sims[0].maxTjC,
        marginC: tjMaxC - sims[0].maxTjC,
        estimateAtTripC: trip.assessment.tjC ?? NaN,
        reason: trip.assessment.reason,
      });
      // Sanity: the physics says this operating point cannot hold below the rating.
      if (v.model.mode === 'powered' && !v.model.thetaCaRampPerS) {
        const op = thermalOperatingPoint({
          ambientC: v.chamberC,
          thetaCPerW: v.model.thetaJcCPerW + v.model.thetaCaCPerW,
          vceV: v.model.vV,
          ibA: v.model.ibA!,
          betaRef: 80,
          tRefC: 25,
          xtb: 1.5,
        });
        expect(op.runaway || op.tjC > tjMaxC).toBe(true);
      }
    },
    20_000,
  );

  it('e-mailed the trips to subscribers (not to the manager, who opted out) and logged every send', async () => {
    await feature.idle();
    const tripMails = sink.messages.filter((m) => /Socket tripped: runaway/.test(m.subject));
    expect(tripMails.length).toBeGreaterThanOrEqual(VARIANTS.length * 3); // admin, engineer, operator
    const toOperator = tripMails.find((m) => m.to.includes(emailFor('operator')) && /PT-01/.test(m.subject))!;
    expect(toOperator).toBeDefined();
    expect(toOperator.text).toMatch(/Leave the socket de-energised/);
    expect(toOperator.text).toMatch(/Junction estimate/);
    expect(sink.messages.some((m) => m.to.includes(emailFor('manager')))).toBe(false);
    const log = await t.ctx.ds.getRepository(MailLogEntity).find();
    expect(log.length).toBe(sink.messages.length);
    expect(log.every((l) => l.status === 'sent' && l.error === null)).toBe(true);
    // In-app notifications for the same people.
    const op = await t.ctx.ds.getRepository(UserEntity).findOneByOrFail({ email: emailFor('operator') });
    const notes = await t.ctx.ds.getRepository(NotificationEntity).find({ where: { userId: op.id, kind: 'runaway-trip' } });
    expect(notes.length).toBe(VARIANTS.length);
    expect(notes[0].link).toMatch(/^\/alarms\?id=/);
  });

  it('a trip alarm is acknowledged by an operator with a note (audited), not by a manager', async () => {
    const a = await t.ctx.ds.getRepository(AlarmEntity).findOneByOrFail({ kind: 'runaway-trip', acknowledgedAt: IsNull() });
    const manager = await t.signIn('manager');
    const refused = await manager.post(`/api/alarms/${a.id}/acknowledge`).send({ note: 'Seen it' });
    expect(refused.status).toBe(403);
    const operator = await t.signIn('operator');
    const ok = await operator.post(`/api/alarms/${a.id}/acknowledge`).send({ note: 'Socket left off; heat sink clamp found loose.' });
    expect(ok.status).toBe(200);
    expect(ok.body.open).toBe(false);
    expect(ok.body.acknowledgedBy.name).toBe('Test operator');
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).find({ where: { entity: 'alarm', entityId: a.id } });
    expect(audit).toHaveLength(1);
    expect(audit[0]).toEqual(
      expect.objectContaining({
        action: 'alarm.acknowledge',
        actor: emailFor('operator'),
        reason: 'Socket left off; heat sink clamp found loose.',
      }),
    );
  });
});

// Runs after the mail counts above, which expect one trip per variant.
describe('an oven shared by two runs (same chamber condition)', () => {
  it('trips the socket of the run it belongs to, not the most recent run on the rig', async () => {
    const v = VARIANTS[0];
    const spec = { sockets: 2, kind: 'hotl' as const, chamberC: v.chamberC, bias: { vceV: v.model.vV, ibA: v.model.ibA } };
    const a = await createRunFixture(t.ctx.ds, { ...spec, rigCode: 'PT-S1' });
    const b = await createRunFixture(t.ctx.ds, { ...spec, rigCode: 'PT-S2' });
    // Run B moves into A's oven, in sockets 2–3, and is the run that changed state last.
    await t.ctx.ds.query(`UPDATE runs SET rig_id = $1, state_changed_at = now() + interval '1 minute' WHERE id = $2`, [a.rig.id, b.run.id]);
    await t.ctx.ds.query(`UPDATE run_sockets SET socket_index = socket_index + 2 WHERE run_id = $1`, [b.run.id]);
    const sims = [
      new SocketSim(HEALTHY, v.chamberC),
      new SocketSim(v.model, v.chamberC),
      new SocketSim(HEALTHY, v.chamberC),
      new SocketSim(HEALTHY, v.chamberC),
    ];
    await drive({ fx: a, sims, chamberC: v.chamberC, sampleS: 2, durationS: 3600, seed: 77, latencyS: 1, watch: 1 });

    expect(sims.map((s) => s.tripped)).toEqual([false, true, false, false]);
    expect(sims[1].maxTjC).toBeLessThan(150);
    const rows = await t.ctx.ds
      .getRepository(RunSocketEntity)
      .find({ where: [{ runId: a.run.id }, { runId: b.run.id }], order: { socketIndex: 'ASC' } });
    expect(rows.map((r) => [r.runId === a.run.id ? 'A' : 'B', r.socketIndex, r.tripped])).toEqual([
      ['A', 0, false],
      ['A', 1, true],
      ['B', 2, false],
      ['B', 3, false],
    ]);
    const alarm = await t.ctx.ds.getRepository(AlarmEntity).findOneByOrFail({ rigId: a.rig.id, kind: 'runaway-trip' });
    expect(alarm.runId).toBe(a.run.id);
    expect(alarm.message).toContain(`run ${a.run.code}`);
    const trip = link.sent.find((c) => c.rigCode === a.rig.code && c.command.type === 'trip')!;
    expect(trip.cmdId).toBe(tripCmdId(a.rig.code, 1, a.run.id));
  }, 30_000);
});

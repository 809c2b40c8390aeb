/**
 * The other half of the protection contract: a long run of sound sockets with sensor noise (seeded
 * PRNG), a settling transient at bias-on and a bias break like a read-point hold, produces no trip
 * and no alarm at all. Same harness as protection.test.ts (telemetry through ctx.events, fake RigLink).
 */
import { AlarmEntity } from '../../server/db/entities';
import { startProtectionFeature, type ProtectionFeature } from '../../server/modules/protection/start';
import { createTestApp, type TestApp } from '../support/api';
import { FakeRigLink, HEALTHY, SocketSim, createRunFixture, driveTelemetry, type RigSims } from './protection-fixtures';

let t: TestApp;
let feature: ProtectionFeature;
const rigs: RigSims = new Map();
const link = new FakeRigLink((c) => {
  if (c.command.type === 'trip') rigs.get(c.rigCode)?.pending.push({ socket: c.command.socket });
});

beforeAll(async () => {
  // No SMTP here: nothing should be sent; a stray send would only log a failed row.
  t = await createTestApp({ smtp: { host: '127.0.0.1', port: 9, from: 'Emberlot <emberlot@harrowgate-lab.example>' } });
  t.ctx.services.rigLink = link;
  feature = await startProtectionFeature(t.ctx, { mail: { attempts: 1, backoffMs: 1, timeoutMs: 500 } });
});

afterAll(async () => {
  await feature?.stop();
  await t?.close();
});

it('4 sound sockets, 3 stress hours of noisy telemetry every 10 s with a bias break: no trip, no alarm', async () => {
  const fx = await createRunFixture(t.ctx.ds, { rigCode: 'HL-01', sockets: 4, chamberC: 100, bias: { vceV: 20, ibA: 0.0015 } });
  // Heat sinking 1.5…3 °C/W and case lags 90…150 s: every socket settles well below its rating.
  const sims = [0, 1, 2, 3].map((i) => new SocketSim({ ...HEALTHY, thetaCaCPerW: 1.5 + 0.5 * i, caseTauS: 90 + 20 * i }, 100));
  let seq = 0;
  const { samples } = await driveTelemetry({
    ctx: t.ctx,
    feature,
    rigs,
    nextSeq: () => ++seq,
    fx,
    sims,
    chamberC: 100,
    sampleS: 10,
    durationS: 3 * 3600,
    seed: 4242,
    latencyS: 1,
    noise: { caseC: 0.3, currentRel: 0.01, chamberC: 0.2 },
    biasGap: { fromS: 5400, toS: 6000 },
  });
  expect(samples).toBeGreaterThan(1000);
  expect(link.sent).toEqual([]);
  expect(sims.every((s) => !s.tripped)).toBe(true);
  expect((await t.ctx.ds.getRepository(AlarmEntity).find()).map((a) => `${a.kind}: ${a.message}`)).toEqual([]);
  expect(feature.monitor.stats.assessments).toBeGreaterThan(4000);
  // The premise: truly sound sockets, far from the 130 °C warning line.
  expect(Math.max(...sims.map((s) => s.maxTjC))).toBeLessThan(125);
}, 25_000);

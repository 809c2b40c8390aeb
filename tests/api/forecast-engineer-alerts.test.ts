/**
 * Each engineer's own forecast alert level (issue "See the verdict coming") through the real API and
 * PostgreSQL: engineers with 40 % and 10 % levels, one following the lab's 50 % and one with the alert
 * off. A lot falling to about a quarter's chance of passing tells only those whose level it crossed,
 * once; rising above and falling again tells them again. Bad levels are refused and change nothing.
 */
import { randomUUID } from 'node:crypto';
import request from 'supertest';
import { DeviceEntity, LotEntity, NotificationEntity, RigEntity, StressPlanEntity } from '../../server/db/entities';
import { SEED_STEPS } from '../../server/seed/seed';
import { insertHistoryRun } from '../../server/seed/seed-history';
import type { LotForecast } from '../../shared/schemas/forecast';
import { TEST_PASSWORD, createTestApp, type TestApp } from '../support/api';
import { insertTestDeviceType, tableCounts } from '../support/db';

let t: TestApp;
type Agent = ReturnType<typeof request.agent>;
const eng: Record<'forty' | 'ten' | 'lab' | 'off', { id: string; agent: Agent }> = {} as never;

async function engineer(name: string, email: string): Promise<{ id: string; agent: Agent }> {
  const admin = await t.signIn('admin');
  const made = await admin.post('/api/users').send({ email, name, role: 'engineer', password: TEST_PASSWORD });
  expect(made.status).toBe(201);
  const agent = request.agent(t.app);
  expect((await agent.post('/api/auth/sign-in').send({ email, password: TEST_PASSWORD })).status).toBe(200);
  return { id: made.body.id, agent };
}

beforeAll(async () => {
  t = await createTestApp();
  const rigs = SEED_STEPS.find((s) => s.name === 'rigs')!;
  await rigs.run(t.ctx.ds);
  await t.signIn('operator');
  await t.signIn('manager');
  const first = await t.signIn('engineer');
  eng.forty = { id: (await first.get('/api/auth/me')).body.user.id, agent: first };
  eng.ten = await engineer('Test engineer ten', 'ten@test.example');
  eng.lab = await engineer('Test engineer lab', 'lab@test.example');
  eng.off = await engineer('Test engineer off', 'off@test.example');
});
afterAll(() => t?.close());

const notices = async (userId: string) =>
  t.ctx.ds.getRepository(NotificationEntity).find({ where: { kind: 'forecast-below', userId }, order: { createdAt: 'ASC' } });

describe('PUT /api/forecast/alert/mine', () => {
  it('refuses 1.5, "abc", an unknown mode and other roles with a clear error; nothing changes', async () => {
    const before = await tableCounts(t.ctx.ds);
    const high = await eng.forty.agent.put('/api/forecast/alert/mine').send({ mode: 'own', below: 1.5 });
    expect(high.status).toBe(400);
    expect(high.body.error.fields).toEqual({ below: ['Chance of passing: at most 0.99'] });
    const text = await eng.forty.agent.put('/api/forecast/alert/mine').send({ mode: 'own', below: 'abc' });
    expect(text.status).toBe(400);
    expect(text.body.error.fields).toEqual({ below: ['Chance of passing: enter a number between 0.01 and 0.99'] });
    const zero = await eng.forty.agent.put('/api/forecast/alert/mine').send({ mode: 'own', below: 0 });
    expect(zero.body.error.fields).toEqual({ below: ['Chance of passing: at least 0.01'] });
    const mode = await eng.forty.agent.put('/api/forecast/alert/mine').send({ mode: 'sometimes' });
    expect(mode.status).toBe(400);
    expect(JSON.stringify(mode.body.error)).toContain("Alert: choose 'lab' (the lab's level), 'own' (with a level) or 'off'");
    const extra = await eng.forty.agent.put('/api/forecast/alert/mine').send({ mode: 'off', below: 0.3 });
    expect(extra.status).toBe(400);
    for (const role of ['operator', 'manager', 'admin'] as const) {
      const res = await (await t.signIn(role)).put('/api/forecast/alert/mine').send({ mode: 'own', below: 0.3 });
      expect(res.status).toBe(403);
    }
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect((await eng.forty.agent.get('/api/forecast/alert/mine')).body).toEqual({
      mode: 'lab',
      below: null,
      labBelow: 0.5,
      notifyReadPoints: true,
      effective: 0.5,
      updatedAt: null,
    });
  });

  it('each engineer sets their own level or turns it off, audited with before and after', async () => {
    const forty = await eng.forty.agent.put('/api/forecast/alert/mine').send({ mode: 'own', below: 0.4 });
    expect(forty.status).toBe(200);
    expect(forty.body).toMatchObject({ mode: 'own', below: 0.4, labBelow: 0.5, effective: 0.4 });
    expect((await eng.ten.agent.put('/api/forecast/alert/mine').send({ mode: 'own', below: 0.1 })).body).toMatchObject({
      mode: 'own',
      effective: 0.1,
    });
    expect((await eng.off.agent.put('/api/forecast/alert/mine').send({ mode: 'off' })).body).toMatchObject({
      mode: 'off',
      below: null,
      effective: null,
    });
    // Back to the lab's level and to its own again: the row goes and comes back.
    expect((await eng.lab.agent.put('/api/forecast/alert/mine').send({ mode: 'own', below: 0.2 })).status).toBe(200);
    expect((await eng.lab.agent.put('/api/forecast/alert/mine').send({ mode: 'lab' })).body).toMatchObject({
      mode: 'lab',
      below: null,
      effective: 0.5,
    });
    const audit = await t.ctx.ds.query(
      `SELECT entity_id AS "entityId", details FROM audit_log WHERE action = 'forecast.alert.own.update' ORDER BY id`,
    );
    expect(audit).toEqual([
      { entityId: eng.forty.id, details: { before: { mode: 'lab', below: null }, after: { mode: 'own', below: 0.4 } } },
      { entityId: eng.ten.id, details: { before: { mode: 'lab', below: null }, after: { mode: 'own', below: 0.1 } } },
      { entityId: eng.off.id, details: { before: { mode: 'lab', below: null }, after: { mode: 'off', below: null } } },
      { entityId: eng.lab.id, details: { before: { mode: 'lab', below: null }, after: { mode: 'own', below: 0.2 } } },
      { entityId: eng.lab.id, details: { before: { mode: 'own', below: 0.2 }, after: { mode: 'lab', below: null } } },
    ]);
  });
});

describe('a lot falling below engineers’ own levels', () => {
  it('tells each engineer whose level it crossed, once per crossing; rising above and falling again tells again', async () => {
    // A running lot read at 0 and 168 h with no drift (exact): at 500 h one device of ten has lost 10.5 % of its
    // gain (a kink, so its own path is uncertain) and the lot's chance of passing falls to about a quarter.
    const { runId, serials, type, lotId } = await t.ctx.ds.transaction(async (m) => {
      const type = await insertTestDeviceType(m, 'HPD-F26');
      const rig = await m.findOneByOrFail(RigEntity, { code: 'OV-01' });
      const plan = await m.save(
        m.create(StressPlanEntity, {
          planKey: randomUUID(),
          version: 1,
          name: 'HTRB engineer alerts',
          kind: 'htrb',
          deviceTypeId: type.id,
          chamberC: 145,
          humidityPct: null,
          bias: { vcbV: 112, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 },
          durationH: 1000,
          readPointsH: [0, 168, 500, 1000],
          sampleSize: 10,
          acceptNumber: 0,
          criteria: { hfeChangePct: 15, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 },
          eaEv: 0.7,
          useC: 55,
        }),
      );
      const lot = await m.save(m.create(LotEntity, { code: 'HG9926-G', deviceTypeId: type.id, quantity: 100, notes: '' }));
      const devices = await m.save(
        Array.from({ length: 10 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `G${String(i + 1).padStart(4, '0')}` })),
      );
      const run = await insertHistoryRun(m, {
        code: 'R-HG9926-G',
        plan,
        deviceType: type,
        rig,
        lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: 0, leakageGrowthPer1000h: 1 } }],
        state: 'stressing',
        startedAt: new Date(Date.now() - 30 * 86_400_000),
        stressHours: 520,
        measuredH: [0, 168],
        noise: 0,
        deviation: 'Ten devices for the alert test',
      });
      return { runId: run.id, serials: devices.map((d) => d.serial), type, lotId: lot.id };
    });
    const hfe0 = type.betaRef;
    const entry = (serial: string, hfe: number) => ({
      serial,
      hfe: +hfe.toFixed(2),
      hfeIcA: type.betaRefIcA,
      hfeVceV: 5,
      icboA: type.icboRefA ?? 20e-9,
      icboVcbV: Math.round(type.bvcboV * 0.8),
      vcesatV: 0.2205,
      measuredC: 25,
    });
    const url = `/api/measurements/runs/${runId}/read-points/500/measurements`;
    const chanceNow = async () => {
      const f: LotForecast = (await eng.forty.agent.get(`/api/analytics/lots/${lotId}/forecast`)).body;
      return f.pPass;
    };
    const counts = async () => ({
      forty: (await notices(eng.forty.id)).length,
      ten: (await notices(eng.ten.id)).length,
      lab: (await notices(eng.lab.id)).length,
      off: (await notices(eng.off.id)).length,
    });

    const fall = await eng.forty.agent.post(url).send(serials.map((s, i) => entry(s, i === 0 ? hfe0 * 0.895 : hfe0)));
    expect(fall.status).toBe(201);
    const low = await chanceNow();
    console.log('chance of passing after the fall:', low);
    // Between the two own levels (10 % and 40 %), below the lab's 50 %.
    expect(low).not.toBeNull();
    expect(low!).toBeGreaterThan(0.1);
    expect(low!).toBeLessThan(0.4);
    expect(await counts()).toEqual({ forty: 1, ten: 0, lab: 1, off: 0 });
    const [mine] = await notices(eng.forty.id);
    expect(mine.body).toBe(
      `Lot HG9926-G: the forecast gives it a ${Math.round(low! * 100)} % chance of passing after the 500 h read point, below your alert level of 40 %. See the lot's trends page for the coming read points.`,
    );
    expect((await notices(eng.lab.id))[0].body).toContain("below the lab's alert level of 50 %");

    // Another entry while still below: no second notice.
    const still = await eng.forty.agent.post(url).send([{ ...entry(serials[1], hfe0), reason: 'Re-measured: fixture reseated' }]);
    expect(still.status).toBe(201);
    expect(await counts()).toEqual({ forty: 1, ten: 0, lab: 1, off: 0 });

    // G0001 re-measured in line with the others: the chance rises above every level, nobody is told.
    const rise = await eng.forty.agent.post(url).send([{ ...entry(serials[0], hfe0), reason: 'Re-measured: the probe had slipped' }]);
    expect(rise.status).toBe(201);
    expect(await chanceNow()).toBeGreaterThanOrEqual(0.5);
    expect(await counts()).toEqual({ forty: 1, ten: 0, lab: 1, off: 0 });

    // And falling again: told again, each whose level it crossed.
    const again = await eng.forty.agent
      .post(url)
      .send([{ ...entry(serials[0], hfe0 * 0.895), reason: 'Re-measured a third time: the first reading stands' }]);
    expect(again.status).toBe(201);
    expect(await chanceNow()).toBeCloseTo(low!, 9);
    expect(await counts()).toEqual({ forty: 2, ten: 0, lab: 2, off: 0 });
  }, 120_000);
});

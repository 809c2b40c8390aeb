/**
 * The verdict forecast over the API (issue #25 item 1): the demo's drifting lot turns before its
 * verdict, the list's column, the back-test on the demo's finished lots plus generated ones, and the
 * alert an engineer sets — told once per lot per crossing after a read-point entry.
 */
import { DeviceEntity, LotEntity, NotificationEntity, RigEntity, MailLogEntity } from '../../server/db/entities';
import { SEED_STEPS } from '../../server/seed/seed';
import { insertHistoryRun } from '../../server/seed/seed-history';
import { FORECAST_CERTAINTY } from '../../shared/forecast/rules';
import type { BacktestView, LotForecast } from '../../shared/schemas/forecast';
import { createTestApp, type TestApp } from '../support/api';
import { insertTestDeviceType, insertTestHtrbPlan, tableCounts } from '../support/db';

let t: TestApp;

beforeAll(async () => {
  t = await createTestApp();
  for (const name of ['device types and lots', 'rigs', 'stress plans', 'measurement history']) {
    const step = SEED_STEPS.find((s) => s.name === name);
    if (step) await step.run(t.ctx.ds);
  }
});
afterAll(() => t?.close());

async function lotId(code: string): Promise<string> {
  return (await t.ctx.ds.getRepository(LotEntity).findOneByOrFail({ code })).id;
}

describe('the demo’s drifting lot HG2612-C', () => {
  it('turns below 0.5 at 500 h while its verdict has no failure yet (the end read point is 1000 h)', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get(`/api/analytics/lots/${await lotId('HG2612-C')}/forecast`);
    expect(res.status).toBe(200);
    const f: LotForecast = res.body;
    const plan = f.plans[0];
    console.log(
      'HG2612-C forecast history:',
      JSON.stringify(plan.history),
      'coming:',
      JSON.stringify(plan.current.coming),
      'parameters:',
      JSON.stringify(plan.current.parameters),
    );
    expect(f.state).toBe('forecast');
    expect(f.asOfH).toBe(500);
    expect(f.pPass).not.toBeNull();
    expect(f.pPass!).toBeLessThan(0.5);
    expect(f.certaintyLevel).toBe(FORECAST_CERTAINTY);
    // 168 h: one read point after time zero is not enough; 500 h: the forecast turns.
    expect(plan.history.map((h) => [h.hours, h.state])).toEqual([
      [168, 'not-enough-data'],
      [500, 'forecast'],
    ]);
    // The verdict counts no failure at 500 h (it warns of drift, it cannot fail the lot before 1000 h).
    expect(plan.history.map((h) => h.failures)).toEqual([0, 0]);
    expect(plan.history.every((h) => h.verdict !== 'failed')).toBe(true);
    expect(plan.current.coming.map((c) => c.hours)).toEqual([1000]);
    expect(plan.current.coming[0].low).toBeGreaterThan(0);
    expect(f.caution).toMatch(/^A forecast, not a verdict/);
  });

  it('the list carries each lot’s chance of passing: final for finished lots, a number for the running one', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.get('/api/analytics/lots');
    const by = Object.fromEntries(
      res.body.items.map((l: { lotCode: string; forecast: { pPass: number | null; state: string } }) => [l.lotCode, l.forecast]),
    );
    expect(by['HG2611-A']).toEqual({ pPass: 1, certain: 'pass', state: 'final', asOfH: 1000 });
    expect(by['HG2610-E']).toEqual({ pPass: 0, certain: 'fail', state: 'final', asOfH: 1000 });
    expect(by['HG2612-C'].state).toBe('forecast');
    expect(by['HG2612-C'].pPass).toBeLessThan(0.5);
  });
});

describe('GET /api/forecast/backtest', () => {
  it('back-tests the demo’s finished lots and the generated ones: calibration bins and lead time', async () => {
    // A few seconds alone; this machine is shared, so the budget is generous.
    const mgr = await t.signIn('manager');
    const res = await mgr.get('/api/forecast/backtest');
    expect(res.status).toBe(200);
    const b: BacktestView = res.body;
    console.log(
      'back-test:',
      JSON.stringify({
        ...b,
        lots: b.lots.map((l) => [l.lotCode, l.passed, l.finalVerdict, l.leadRightSide, l.leadCertain, l.points.map((p) => p.pPass)]),
      }),
    );
    expect(b.sources.databaseLots).toBeGreaterThanOrEqual(5);
    expect(b.sources.generatedLots).toBe(12);
    expect(b.bins.map((x) => [x.from, x.to])).toEqual([
      [0, 0.1],
      [0.1, 0.3],
      [0.3, 0.5],
      [0.5, 0.7],
      [0.7, 0.9],
      [0.9, 1],
    ]);
    expect(b.bins.reduce((a, x) => a + x.forecasts, 0)).toBe(b.forecasts);
    // Brier score of a constant 0.5 is 0.25 (common practice): the forecast must do better.
    expect(b.brier!).toBeLessThan(0.15);
    expect(b.lots.some((l) => l.lotCode === 'HG2610-E' && !l.passed)).toBe(true);
  }, 180_000);

  it('refuses an operator (trends are for engineers, managers and admins)', async () => {
    const op = await t.signIn('operator');
    const res = await op.get('/api/forecast/backtest');
    expect(res.status).toBe(403);
  });
});

describe('the forecast alert', () => {
  it('refuses a bad threshold with a clear message and changes nothing; a manager may not set it', async () => {
    const eng = await t.signIn('engineer');
    const mgr = await t.signIn('manager');
    const before = await tableCounts(t.ctx.ds);
    const bad = await eng.put('/api/forecast/alert').send({ below: 1.5, reason: 'try' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields).toEqual({ below: ['Chance of passing: at most 0.99'] });
    const noReason = await eng.put('/api/forecast/alert').send({ below: 0.4 });
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.fields).toEqual({ reason: ['Say why the threshold changes'] });
    const denied = await mgr.put('/api/forecast/alert').send({ below: 0.4, reason: 'managers watch' });
    expect(denied.status).toBe(403);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect((await eng.get('/api/forecast/alert')).body.below).toBe(0.5);
  });

  it('an engineer sets it (audited); a lot falling below after a read-point entry is told once, not on every entry', async () => {
    const eng = await t.signIn('engineer');
    const set = await eng.put('/api/forecast/alert').send({ below: 0.6, reason: 'Warn earlier on the new passivation lots' });
    expect(set.status).toBe(200);
    expect(set.body).toEqual(expect.objectContaining({ below: 0.6, updatedByName: expect.any(String) }));
    const audit = await t.ctx.ds.query(`SELECT action, reason, details FROM audit_log WHERE action = 'forecast.alert.update'`);
    expect(audit).toEqual([
      {
        action: 'forecast.alert.update',
        reason: 'Warn earlier on the new passivation lots',
        details: { before: { below: 0.5 }, after: { below: 0.6 } },
      },
    ]);

    // A running lot read at 0 and 168 h, drifting −20 % per 1000 h (exact): at 500 h every device is at −10 %.
    const { runId, serials, type } = await t.ctx.ds.transaction(async (m) => {
      const type = await insertTestDeviceType(m, 'HPD-F25');
      const rig = await m.findOneByOrFail(RigEntity, { code: 'OV-01' });
      const plan = await insertTestHtrbPlan(m, type.id, { name: 'HTRB forecast alert' });
      const lot = await m.save(m.create(LotEntity, { code: 'HG9925-F', deviceTypeId: type.id, quantity: 100, notes: '' }));
      const devices = await m.save(
        Array.from({ length: 10 }, (_, i) => m.create(DeviceEntity, { lotId: lot.id, serial: `F${String(i + 1).padStart(4, '0')}` })),
      );
      const run = await insertHistoryRun(m, {
        code: 'R-HG9925-F',
        plan,
        deviceType: type,
        rig,
        lots: [{ lot, devices, drift: { hfeDriftPctPer1000h: -20, leakageGrowthPer1000h: 1 } }],
        state: 'stressing',
        startedAt: new Date(Date.now() - 30 * 86_400_000),
        stressHours: 520,
        measuredH: [0, 168],
        noise: 0,
        deviation: 'Ten devices for the forecast test',
      });
      return { runId: run.id, serials: devices.map((d) => d.serial), type };
    });
    // The seed's own conditions and time-zero values (server/seed/seed-history.ts with noise 0).
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
    const notices = () => t.ctx.ds.getRepository(NotificationEntity).count({ where: { kind: 'forecast-below' } });
    // Every device at 500 h, on its −20 %/1000 h line: all ten cross −15 % by 1000 h, so the lot cannot pass.
    const first = await eng
      .post(`/api/measurements/runs/${runId}/read-points/500/measurements`)
      .send(serials.map((s) => entry(s, hfe0 * 0.9)));
    expect(first.status).toBe(201);
    const forecast: LotForecast = (await eng.get(`/api/analytics/lots/${await lotId('HG9925-F')}/forecast`)).body;
    expect(forecast.pPass).toBe(0);
    const after1 = await notices();
    expect(after1).toBeGreaterThan(0);
    const mine = await t.ctx.ds.getRepository(NotificationEntity).find({ where: { kind: 'forecast-below' } });
    expect(mine[0].title).toBe('Lot HG9925-F: chance of passing 0 %');
    expect(mine[0].body).toBe(
      "Lot HG9925-F: the forecast gives it a 0 % chance of passing after the 500 h read point, below the lab's alert level of 60 %. See the lot's trends page for the coming read points.",
    );
    await t.ctx.services.mail.idle();
    expect(await t.ctx.ds.getRepository(MailLogEntity).count({ where: { kind: 'forecast-below' } })).toBe(after1);
    // Another entry at the same read point: still below, no second notice.
    const again = await eng
      .post(`/api/measurements/runs/${runId}/read-points/500/measurements`)
      .send([{ ...entry(serials[0], hfe0 * 0.89), reason: 'Re-measured: the fixture was not seated' }]);
    expect(again.status).toBe(201);
    expect(await notices()).toBe(after1);
  });
});

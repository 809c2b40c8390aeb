/**
 * Issue #20 items 3 and 5 through the API: the device type's hot-leakage point and second-breakdown
 * line (validation, storage), the plan's chamber band in kelvin (and the migration that gave
 * existing plans theirs), the 700 V HTRB at Tj max passing with its hot point, and a 25 V powered
 * plan beyond SOA refused with numbers.
 */
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { RatingsBandsLeakageSoa1813000000000 } from '../../server/db/migrations/1813000000000-RatingsBandsLeakageSoa';
import type { PlanTemplate } from '../../shared/schemas/plans';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
const demo = (pn: string) => DEMO_DEVICE_TYPES.find((d) => d.partNumber === pn)!;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t.close();
});

/** An invented heat-sunk 100 W part with its SOA entered (knee 15 V, n 2). */
const POWER_PART = {
  partNumber: 'HPD-P100',
  description: 'NPN power transistor on its heat sink (θja as mounted)',
  polarity: 'NPN',
  bvcboV: 200,
  bvceoV: 120,
  bveboV: 7,
  icMaxA: 10,
  pMaxW: 100,
  tjMaxC: 175,
  thetaJcCPerW: 1.25,
  thetaJaCPerW: 2.5,
  betaRef: 50,
  betaRefIcA: 1,
  icboRefA: 1e-9,
  sbKneeV: 15,
  sbSlopeN: 2,
};

describe('device type: hot-leakage point and S/b line', () => {
  it('stores the fields; the defaults for the S/b line are stated ones (20 V, n 2)', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/device-types').send(demo('HPD-7N400'));
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ icboHotA: 10e-6, icboHotC: 150, icboHotVcbV: 700, sbKneeV: 20, sbSlopeN: 2 });
    const p = await eng.post('/api/device-types').send(POWER_PART);
    expect(p.status).toBe(201);
    expect(p.body).toMatchObject({ icboHotA: null, icboHotC: null, icboHotVcbV: null, sbKneeV: 15, sbSlopeN: 2 });
  });

  it('refuses a partial or impossible hot point and a flat S/b line with field messages, changing nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const base = { ...POWER_PART, partNumber: 'HPD-BAD1' };
    const partial = await eng.post('/api/device-types').send({ ...base, icboHotA: 5e-6, icboHotC: 150 });
    expect(partial.status).toBe(400);
    expect(partial.body.error.fields).toEqual({ icboHotVcbV: ['A hot-leakage point needs ICBO, its temperature and its VCB together'] });
    const lower = await eng.post('/api/device-types').send({ ...base, icboHotA: 1e-10, icboHotC: 150, icboHotVcbV: 100 });
    expect(lower.body.error.fields).toEqual({ icboHotA: ['Hot ICBO must be above the 25 °C figure (leakage grows with temperature)'] });
    const cold = await eng.post('/api/device-types').send({ ...base, icboHotA: 5e-6, icboHotC: 20, icboHotVcbV: 100 });
    expect(cold.body.error.fields).toEqual({ icboHotC: ['The hot point must be above 25 °C'] });
    const overV = await eng.post('/api/device-types').send({ ...base, icboHotA: 5e-6, icboHotC: 150, icboHotVcbV: 250 });
    expect(overV.body.error.fields).toEqual({ icboHotVcbV: ['The hot point’s VCB cannot exceed BVCBO'] });
    const flat = await eng.post('/api/device-types').send({ ...base, sbSlopeN: 1 });
    expect(flat.body.error.fields).toEqual({ sbSlopeN: ['The S/b slope must be steeper than the thermal line (n > 1)'] });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('PATCH checks the merged point: adding only the hot ICBO to a part without one is refused', async () => {
    const eng = await t.signIn('engineer');
    const list = await eng.get('/api/device-types?q=P100');
    const id = list.body.items[0].id as string;
    const res = await eng.patch(`/api/device-types/${id}`).send({ icboHotA: 5e-6 });
    expect(res.status).toBe(400);
    expect(res.body.error.fields).toEqual({ icboHotC: ['A hot-leakage point needs ICBO, its temperature and its VCB together'] });
    expect((await eng.get(`/api/device-types/${id}`)).body.icboHotA).toBeNull();
  });
});

describe('plan check at the rating', () => {
  const idOf = async (pn: string) => {
    const eng = await t.signIn('engineer');
    return (await eng.get(`/api/device-types?q=${pn}`)).body.items[0].id as string;
  };

  it("the demo's 700 V part: its HTRB template (150 °C = Tj max, 560 V) passes with the hot point, and is blocked as runaway without it", async () => {
    const eng = await t.signIn('engineer');
    const id = await idOf('HPD-7N400');
    const tpl = (await eng.get(`/api/plans/templates?deviceTypeId=${id}`)).body.items.find((x: PlanTemplate) => x.kind === 'htrb');
    expect(tpl.plan).toMatchObject({ chamberC: 150, chamberBand: { belowK: 0, aboveK: 5 }, bias: { vcbV: 560 } });
    const ok = await eng.post('/api/plans/check').send(tpl.plan);
    expect(ok.status).toBe(200);
    expect(ok.body.blocking).toBe(false);
    expect(ok.body.status).toBe('ok');
    // [calc, REFERENCE A5 formula] 125 °C·ln2/ln(10 µA / 100 nA) = 18.81 °C per doubling (invented demo point)
    expect(ok.body.derived.leakageDoublingC).toBeCloseTo(18.81, 2);
    await eng.patch(`/api/device-types/${id}`).send({ icboHotA: null, icboHotC: null, icboHotVcbV: null });
    const without = await eng.post('/api/plans/check').send(tpl.plan);
    expect(without.body.blocking).toBe(true);
    const leak = without.body.findings.find((f: { code: string }) => f.code === 'leakage-self-heating');
    expect(leak.title).toBe('Leakage runaway: no stable junction temperature');
    await eng.patch(`/api/device-types/${id}`).send({ icboHotA: 10e-6, icboHotC: 150, icboHotVcbV: 700 });
  });

  it('a 25 V powered plan beyond SOA is refused with numbers [calc: REFERENCE A6 formulas]', async () => {
    const eng = await t.signIn('engineer');
    const body = {
      name: 'Powered life 25 V, 2 A on the heat sink',
      kind: 'hotl',
      deviceTypeId: await idOf('HPD-P100'),
      chamberC: 25,
      bias: { vceV: 25, icA: 2 },
      durationH: 1000,
      sampleSize: 45,
      acceptNumber: 0,
      criteria: {},
    };
    const res = await eng.post('/api/plans/check').send(body);
    expect(res.status).toBe(200);
    expect(res.body.blocking).toBe(true);
    const f = res.body.findings.find((x: { code: string }) => x.code === 'forward-soa');
    expect(f.severity).toBe('block');
    // Tc = 25 + 2.5 × 50 − 1.25 × 50 = 87.5 °C; (100 W/15 V)·(25/15)^−2 = 2.4 A × k_sb 0.7917 = 1.9 A < 2 A
    expect(f.numbers.allowedIcA.value).toBeCloseTo(1.9, 4);
    expect(f.numbers.caseC.value).toBeCloseTo(87.5, 10);
    expect(f.explanation).toContain('IC 2 A at VCE 25 V');
    expect(f.explanation).toContain('allowed 1.9 A');
    // the same power at 15 V (the knee) passes the SOA rule
    const low = await eng.post('/api/plans/check').send({ ...body, bias: { vceV: 15, icA: 50 / 15 } });
    expect(low.body.findings.find((x: { code: string }) => x.code === 'forward-soa').severity).toBe('ok');
  });
});

describe('chamber band on a plan', () => {
  it('a plan saved without a band gets its method’s; a stated band is kept; a bad band is a 400 on its field', async () => {
    const eng = await t.signIn('engineer');
    const list = await eng.get('/api/device-types?q=7N400');
    const body = {
      name: 'HTRB 150 °C band check',
      kind: 'htrb',
      deviceTypeId: list.body.items[0].id,
      chamberC: 150,
      bias: { vcbV: 560 },
      durationH: 1000,
      sampleSize: 77,
      acceptNumber: 0,
      criteria: {},
    };
    const saved = await eng.post('/api/plans').send(body);
    expect(saved.status).toBe(201);
    expect(saved.body.chamberBand).toEqual({ belowK: 0, aboveK: 5 });
    const stated = await eng.post('/api/plans').send({ ...body, chamberBand: { belowK: 0, aboveK: 10 } });
    expect(stated.body.chamberBand).toEqual({ belowK: 0, aboveK: 10 });
    const before = await tableCounts(t.ctx.ds);
    const bad = await eng.post('/api/plans').send({ ...body, chamberBand: { belowK: -1, aboveK: 5 } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields).toEqual({ 'chamberBand.belowK': ['A band cannot be negative'] });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('the migration gives plans saved before it the ±3 % of their set value they ran with (at least ±1 K) [pub: MIL-STD-750 general requirements §4.5]', async () => {
    const qr = t.ctx.ds.createQueryRunner();
    try {
      const m = new RatingsBandsLeakageSoa1813000000000();
      await qr.startTransaction();
      await m.down(qr);
      const [type] = await qr.query(`SELECT id FROM device_types LIMIT 1`);
      const insert = (name: string, c: number) =>
        qr.query(
          `INSERT INTO stress_plans (plan_key, version, name, kind, device_type_id, chamber_c, bias, duration_h, read_points_h, sample_size, accept_number, criteria)
           VALUES (gen_random_uuid(), 1, $1, 'htrb', $2, $3, '{}', 1000, '[0]', 10, 0, '{}')`,
          [name, type.id, c],
        );
      await insert('legacy 125', 125);
      await insert('legacy 0', 0);
      await m.up(qr);
      const rows: Array<{ name: string; chamber_band: unknown }> = await qr.query(
        `SELECT name, chamber_band FROM stress_plans WHERE name LIKE 'legacy %' ORDER BY name`,
      );
      expect(rows).toEqual([
        { name: 'legacy 0', chamber_band: { belowK: 1, aboveK: 1 } },
        { name: 'legacy 125', chamber_band: { belowK: 3.75, aboveK: 3.75 } },
      ]);
    } finally {
      await qr.rollbackTransaction();
      await qr.release();
    }
  });
});

/**
 * Stress plans: CRUD-by-version, the stored plan check, the live check and the templates.
 * Template numbers are checked against the reference methods (§1), each source named beside its check.
 */
import { buildPlanTemplates } from '../../shared/plan-templates';
import { checkPlan } from '../../shared/safety/plan-check';
import { deviceTypeInputSchema } from '../../shared/schemas/devices';
import { planInputSchema, type PlanTemplate } from '../../shared/schemas/plans';
import type { z } from 'zod';
import { AuditLogEntity, DeviceTypeEntity, StressPlanEntity, UserEntity } from '../../server/db/entities';
import { DEMO_DEVICE_TYPES } from '../../server/seed/demo-data';
import { seedPlans } from '../../server/seed/seed-plans';
import { createTestApp, type TestApp } from '../support/api';
import { createTestDb, tableCounts } from '../support/db';

let t: TestApp;
const ids: Record<string, string> = {};
const demo = (pn: string) => DEMO_DEVICE_TYPES.find((d) => d.partNumber === pn)!;

beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  for (const pn of ['HPD-2N140', 'HPD-3P90', 'HPD-7N400', 'HPD-S230']) {
    const res = await eng.post('/api/device-types').send(demo(pn));
    expect(res.status).toBe(201);
    ids[pn] = res.body.id;
  }
});
afterAll(async () => {
  await t.close();
});

/** A request body: the schema's input (fields with defaults may be left out), as a client sends it. */
function htrbBody(patch: Partial<z.input<typeof planInputSchema>> = {}): Record<string, unknown> {
  return {
    name: 'HTRB 145 °C, 80 % VCBO, 1000 h (JESD22-A108)',
    kind: 'htrb',
    deviceTypeId: ids['HPD-2N140'],
    chamberC: 145,
    bias: { vcbV: 112 },
    durationH: 1000,
    readPointsH: [0, 168, 500, 1000],
    sampleSize: 77,
    acceptNumber: 0,
    criteria: {},
    ...patch,
  };
}

async function templatesFor(pn: string): Promise<PlanTemplate[]> {
  const eng = await t.signIn('engineer');
  const res = await eng.get(`/api/plans/templates?deviceTypeId=${ids[pn]}`);
  expect(res.status).toBe(200);
  return res.body.items;
}
const byKind = (list: PlanTemplate[], kind: string) => list.find((x) => x.kind === kind)!;

describe('plan templates', () => {
  it('without a device type: the seven stresses (four socket-biased, three chamber), each with its sources and rules, no plan body', async () => {
    const op = await t.signIn('operator');
    const res = await op.get('/api/plans/templates');
    expect(res.status).toBe(200);
    expect(res.body.items.map((x: PlanTemplate) => x.kind)).toEqual(['htrb', 'hotl', 'iol', 'thb', 'tc', 'htsl', 'ac']);
    const templates: PlanTemplate[] = res.body.items;
    for (const tpl of templates) {
      expect(tpl.plan).toBeNull();
      expect(tpl.sources.length).toBeGreaterThan(0);
      expect(tpl.rules.every((r) => r.source.length > 0)).toBe(true);
    }
  });

  it('for every demo device type, every template is a valid plan body (planInputSchema)', async () => {
    for (const pn of Object.keys(ids)) {
      for (const tpl of await templatesFor(pn)) {
        const parsed = planInputSchema.safeParse(tpl.plan);
        expect(parsed.success).toBe(true);
        expect(tpl.plan!.deviceTypeId).toBe(ids[pn]);
        // read points 0 / 168 / 500 / 1000 h [practice]; TC counts cycles (tests/unit/chamber-stresses.test.ts), autoclave 0 / 48 / 96 h [practice]
        if (tpl.kind === 'ac') expect(tpl.plan!.readPointsH).toEqual([0, 48, 96]);
        else if (tpl.kind !== 'tc') expect(tpl.plan!.readPointsH).toEqual([0, 168, 500, 1000]);
        expect(tpl.plan!.notes).toContain('Sources:');
      }
    }
  });

  it('HTRB: VCB = 0.8 × BVCBO, 1000 h, 77 per lot accept 0 [pub: JESD22-A108; AEC-Q101 test table]; stress at Tj max with a +5/−0 K band [memory: JESD22-A108 — confirm]', async () => {
    const tpl = byKind(await templatesFor('HPD-2N140'), 'htrb');
    expect(tpl.sources).toContain('[pub: JESD22-A108; AEC-Q101 test table]');
    expect(tpl.plan!.bias.vcbV).toBeCloseTo(0.8 * 140, 6); // [pub: JESD22-A108; AEC-Q101 test table]
    expect(tpl.plan!.durationH).toBe(1000); // [pub: JESD22-A108]
    expect([tpl.plan!.sampleSize, tpl.plan!.acceptNumber]).toEqual([77, 0]); // [pub: AEC-Q101 test table]
    // Tj at rated max [pub: JESD22-A108] as the minimum, not floor(Tj max / 1.03) = 145 °C; band +5/−0 K [memory — confirm]
    expect(tpl.plan!.chamberC).toBe(150);
    expect(tpl.plan!.chamberBand).toEqual({ belowK: 0, aboveK: 5 });
    expect(tpl.title).toBe('HTRB 150 °C (Tj max), 80 % VCBO, 1000 h (JESD22-A108)');
    // 75 V part: 0.8 × 75 = 60 V, never rounded above the exact fraction
    const s230 = byKind(await templatesFor('HPD-S230'), 'htrb');
    expect(s230.plan!.bias.vcbV).toBeCloseTo(60, 6);
    expect(s230.plan!.bias.vcbV!).toBeLessThanOrEqual(75 * 0.8);
  });

  it('powered life: n 45, accept 0; dissipation ≥ 75 % of rating; VCB in 10–30 V; 1000 h [pub: MIL-PRF-19500 group C life]', async () => {
    const d = demo('HPD-3P90');
    const tpl = byKind(await templatesFor('HPD-3P90'), 'hotl');
    const p = tpl.plan!;
    expect(tpl.sources).toContain('[pub: MIL-PRF-19500 group C life]');
    expect([p.sampleSize, p.acceptNumber]).toEqual([45, 0]); // [pub: MIL-PRF-19500 group C life]
    expect(p.durationH).toBe(1000);
    expect(p.bias.ibA).toBeNull(); // collector current regulated (no runaway loop)
    const power = p.bias.vceV! * p.bias.icA!;
    const freeAirRating = (d.tjMaxC - p.chamberC) / d.thetaJaCPerW; // [pub: JEDEC JESD51 definitions]
    expect(power / freeAirRating).toBeGreaterThanOrEqual(0.75); // [pub: MIL-PRF-19500 group C life]
    const vcb = p.bias.vceV! - 0.7; // VCB ≈ VCE − VBE
    expect(vcb).toBeGreaterThanOrEqual(10);
    expect(vcb).toBeLessThanOrEqual(30);
    // Junction aimed at Tj max less 5 °C (Emberlot choice): 25 + 62.5 × P ≤ 145
    expect(p.chamberC + d.thetaJaCPerW * power).toBeLessThanOrEqual(145 + 1e-9);
    expect(p.chamberC + d.thetaJaCPerW * power).toBeGreaterThan(144);
  });

  it('intermittent life: on-time = off-time, ΔTj ≥ 100 °C for 15,000 cycles [pub: MIL-STD-750 method 1037 as used by AEC-Q101]', async () => {
    const d = demo('HPD-S230');
    const tpl = byKind(await templatesFor('HPD-S230'), 'iol');
    const p = tpl.plan!;
    expect(tpl.sources).toContain('[pub: MIL-STD-750 method 1037 as used by AEC-Q101]');
    expect(p.cycle!.onMin).toBe(p.cycle!.offMin);
    expect(p.cycle!.deltaTjC).toBeGreaterThanOrEqual(100);
    expect(p.cycle!.cycles).toBe(15000);
    // the on-power gives the planned swing over θja (steady state, JESD51 definition)
    expect(d.thetaJaCPerW * p.bias.vceV! * p.bias.icA!).toBeCloseTo(100, 0);
    // 15,000 cycles × (2 + 2) min = 1000 h (Emberlot choice of 2 min)
    expect(p.durationH).toBeCloseTo(1000, 6);
    // sample: [memory: AEC-Q101 test table — 3 lots × 77, accept 0]; flagged as memory in the template
    expect([p.sampleSize, p.acceptNumber]).toEqual([77, 0]);
    expect(tpl.sources.some((s) => s.startsWith('[memory: AEC-Q101'))).toBe(true);
  });

  it('THB: 85 °C / 85 % RH, 80 % of rated reverse voltage, 1000 h [pub: JESD22-A101]', async () => {
    const tpl = byKind(await templatesFor('HPD-7N400'), 'thb');
    const p = tpl.plan!;
    expect(tpl.sources).toContain('[pub: JESD22-A101]');
    expect([p.chamberC, p.humidityPct]).toEqual([85, 85]);
    expect(p.bias.vcbV).toBeCloseTo(0.8 * 700, 6); // [pub: JESD22-A101]
    expect(p.durationH).toBe(1000);
  });

  it('the API templates match the shared builder, and an unknown device type is a 404', async () => {
    const pn = 'HPD-2N140';
    const built = buildPlanTemplates({ id: ids[pn], ...deviceTypeInputSchema.parse(demo(pn)) });
    const api = await templatesFor(pn);
    expect(api.map((x) => x.plan)).toEqual(built.map((x) => x.plan));
    const eng = await t.signIn('engineer');
    const res = await eng.get('/api/plans/templates?deviceTypeId=00000000-0000-4000-8000-000000000000');
    expect(res.status).toBe(404);
  });
});

describe('plans', () => {
  let v1: { id: string; planKey: string; [k: string]: unknown };

  it('live check: POST /api/plans/check returns the check for an unsaved plan and stores nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post('/api/plans/check').send(htrbBody());
    expect(res.status).toBe(200);
    const expected = checkPlan(deviceTypeInputSchema.parse(demo('HPD-2N140')), planInputSchema.parse(htrbBody()));
    expect(res.body.findings).toEqual(JSON.parse(JSON.stringify(expected.findings.map((f) => ({ ...f, order: Object.keys(f.numbers) })))));
    expect(res.body.blocking).toBe(false);
    expect(res.body.status).toBe('warn'); // leakage: runaway margin under 25 K from the top of the +5/−0 K band (common practice)
    expect(res.body.device.partNumber).toBe('HPD-2N140');
    expect(res.body.constants).toMatchObject({ warnFractionOfLimit: 0.9, loopGainBlock: 1, leakageDoublingC: 10, breakdownDerating: 0.8 });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('the live check refuses an invalid body with field messages', async () => {
    const mgr = await t.signIn('manager');
    const res = await mgr.post('/api/plans/check').send(htrbBody({ bias: { vcbV: null } }));
    expect(res.status).toBe(400);
    expect(res.body.error.fields).toEqual({ 'bias.vcbV': ['Reverse-bias plans need a collector-base voltage'] });
  });

  it('creates version 1 with the plan check stored beside it (findings, constants, ratings used); audited', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/plans').send(htrbBody({ readPointsH: [1000, 0, 500, 168] }));
    expect(res.status).toBe(201);
    v1 = res.body;
    expect(res.body).toMatchObject({ version: 1, current: true, kind: 'htrb', checkStatus: 'warn', device: { partNumber: 'HPD-2N140' } });
    expect(res.body.readPointsH).toEqual([0, 168, 500, 1000]);
    expect(res.body.createdBy).toEqual({ id: expect.any(String), name: 'Test engineer' });
    expect(res.body.versions).toEqual([expect.objectContaining({ id: v1.id, version: 1, current: true })]);
    const row = await t.ctx.ds.getRepository(StressPlanEntity).findOneByOrFail({ id: v1.id });
    const expected = checkPlan(deviceTypeInputSchema.parse(demo('HPD-2N140')), planInputSchema.parse(htrbBody()));
    expect(row.checkResult!.findings).toEqual(
      JSON.parse(JSON.stringify(expected.findings.map((f) => ({ ...f, order: Object.keys(f.numbers) })))),
    );
    expect(row.checkResult!.constants.warnFractionOfLimit).toBe(0.9);
    expect(row.checkResult!.device.ratings.bvcboV).toBe(140);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'plan.create', entityId: v1.id });
    expect(audit.details).toMatchObject({ version: 1, checkStatus: 'warn' });
  });

  it('refuses invalid plans with exact messages and changes nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post('/api/plans').send(htrbBody({ name: '', sampleSize: 5, acceptNumber: 5, readPointsH: [0, 168, 168, 2000] }));
    expect(res.status).toBe(400);
    expect(res.body.error.fields).toEqual({
      name: ['Name the plan'],
      readPointsH: ['Read points must be different hours', 'A read point lies after the end of the run'],
      acceptNumber: ['Accept number must be below the sample size'],
    });
    const powered = await eng.post('/api/plans').send(htrbBody({ kind: 'hotl', bias: { vceV: 20 } }));
    expect(powered.body.error.fields).toEqual({ 'bias.vceV': ['Powered plans need VCE and either IB or IC'] });
    const thb = await eng.post('/api/plans').send(htrbBody({ kind: 'thb' }));
    expect(thb.body.error.fields).toEqual({ humidityPct: ['Humidity plans need a relative humidity'] });
    const unknown = await eng.post('/api/plans').send(htrbBody({ deviceTypeId: '00000000-0000-4000-8000-000000000000' }));
    expect(unknown.status).toBe(422);
    expect(unknown.body.error.message).toBe('The device type of this plan was not found. Choose one from the list.');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('an unsafe plan can be saved as a draft, with its blocking check stored (booking refuses it later)', async () => {
    const eng = await t.signIn('engineer');
    const body = htrbBody({ name: 'Draft HTRB at 97 % VCBO', bias: { vcbV: 0.97 * 140 } });
    const check = await eng.post('/api/plans/check').send(body);
    expect(check.body.blocking).toBe(true);
    const vcb = check.body.findings.find((f: { code: string }) => f.code === 'vcb-vs-bvcbo');
    expect(vcb.severity).toBe('block');
    expect(vcb.numbers.allowedVcbV.value).toBeCloseTo(112, 6);
    const res = await eng.post('/api/plans').send(body);
    expect(res.status).toBe(201);
    expect(res.body.checkStatus).toBe('block');
    expect(res.body.checkResult.blocking).toBe(true);
  });

  it('edit = a new version: same planKey, version 2, v1 no longer current but unchanged and still readable', async () => {
    const eng = await t.signIn('engineer');
    const rowBefore = await t.ctx.ds.getRepository(StressPlanEntity).findOneByOrFail({ id: v1.id });
    const res = await eng.post(`/api/plans/${v1.id}/versions`).send(htrbBody({ chamberC: 140, notes: 'Lower chamber for the first lot' }));
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ planKey: v1.planKey, version: 2, current: true, chamberC: 140 });
    expect(res.body.id).not.toBe(v1.id);
    expect(res.body.versions.map((v: { version: number; current: boolean }) => [v.version, v.current])).toEqual([
      [2, true],
      [1, false],
    ]);

    const rowAfter = await t.ctx.ds.getRepository(StressPlanEntity).findOneByOrFail({ id: v1.id });
    expect({ ...rowAfter, current: true }).toEqual(rowBefore); // only the current flag moved
    expect(rowAfter.current).toBe(false);

    const old = await eng.get(`/api/plans/${v1.id}`);
    expect(old.status).toBe(200);
    expect(old.body).toMatchObject({ version: 1, current: false, chamberC: 145 });
    expect(old.body.versions).toHaveLength(2);

    const list = await eng.get('/api/plans');
    const mine = list.body.items.filter((p: { planKey: string }) => p.planKey === v1.planKey);
    expect(mine).toEqual([expect.objectContaining({ id: res.body.id, version: 2 })]);

    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'plan.version', entityId: res.body.id });
    expect(audit.details).toMatchObject({ version: 2, previousId: v1.id, changed: ['chamberC', 'notes'] });
  });

  it('editing an old version is a 409; moving a plan to another device type is a 422; both change nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const stale = await eng.post(`/api/plans/${v1.id}/versions`).send(htrbBody());
    expect(stale.status).toBe(409);
    expect(stale.body.error.message).toBe(
      'This is version 1 of “HTRB 145 °C, 80 % VCBO, 1000 h (JESD22-A108)”; version 2 is newer. Open the newest version and edit that.',
    );
    const list = await eng.get('/api/plans');
    const current = list.body.items.find((p: { planKey: string }) => p.planKey === v1.planKey);
    const moved = await eng.post(`/api/plans/${current.id}/versions`).send(htrbBody({ deviceTypeId: ids['HPD-3P90'], bias: { vcbV: 80 } }));
    expect(moved.status).toBe(422);
    expect(moved.body.error.message).toBe(
      "A new version keeps the plan's device type (HPD-2N140). Start a new plan for another device type.",
    );
    const missing = await eng.post('/api/plans/00000000-0000-4000-8000-000000000000/versions').send(htrbBody());
    expect(missing.status).toBe(404);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('a stored check keeps the ratings it was run with after the device type changes', async () => {
    const eng = await t.signIn('engineer');
    await eng.patch(`/api/device-types/${ids['HPD-2N140']}`).send({ bvcboV: 120 }).expect(200);
    const old = await eng.get(`/api/plans/${v1.id}`);
    expect(old.body.checkResult.device.ratings.bvcboV).toBe(140);
    const fresh = await eng.post('/api/plans/check').send(htrbBody());
    expect(fresh.body.device.ratings.bvcboV).toBe(120);
    expect(fresh.body.blocking).toBe(true); // 112 V is now 93 % of the new rating
    await eng.patch(`/api/device-types/${ids['HPD-2N140']}`).send({ bvcboV: 140 }).expect(200);
  });

  it('templates save as plans; the list filters by kind and device type, for every role', async () => {
    const eng = await t.signIn('engineer');
    const tpl = byKind(await templatesFor('HPD-3P90'), 'hotl');
    const saved = await eng.post('/api/plans').send(tpl.plan!);
    expect(saved.status).toBe(201);
    const op = await t.signIn('operator');
    const hotl = await op.get('/api/plans?kind=hotl');
    expect(hotl.body.items.map((p: { id: string }) => p.id)).toEqual([saved.body.id]);
    // the junction aimed 5 K below Tj max is no warning (kelvin margin; "90 % of 150 °C" warned at 135 °C)
    expect(hotl.body.items[0]).toMatchObject({ device: { partNumber: 'HPD-3P90' }, sampleSize: 45, checkStatus: 'ok', blockCount: 0 });
    const byType = await op.get(`/api/plans?deviceTypeId=${ids['HPD-2N140']}`);
    expect(byType.body.items.every((p: { device: { id: string } }) => p.device.id === ids['HPD-2N140'])).toBe(true);
    expect(byType.body.items).toHaveLength(2);
    expect((await op.get('/api/plans?kind=nope')).status).toBe(400);
  });

  it('operators read plans but cannot write or run the check; managers cannot write', async () => {
    const op = await t.signIn('operator');
    expect((await op.post('/api/plans').send(htrbBody())).status).toBe(403);
    expect((await op.post('/api/plans/check').send(htrbBody())).status).toBe(403);
    expect((await op.get(`/api/plans/${v1.id}`)).status).toBe(200);
    const mgr = await t.signIn('manager');
    expect((await mgr.post(`/api/plans/${v1.id}/versions`).send(htrbBody())).status).toBe(403);
  });
});

describe('demo seed', () => {
  it('seeds eight plans (one with two versions, three for the chambers) and one unsafe draft the check refuses', async () => {
    const db = await createTestDb();
    try {
      await db.ds.getRepository(UserEntity).insert({ email: 'e@x.example', name: 'Eng', role: 'engineer', passwordHash: 'x' });
      for (const d of DEMO_DEVICE_TYPES) await db.ds.getRepository(DeviceTypeEntity).save(db.ds.getRepository(DeviceTypeEntity).create(d));
      await seedPlans(db.ds);
      const rows = await db.ds.getRepository(StressPlanEntity).find();
      expect(rows).toHaveLength(9);
      const current = rows.filter((r) => r.current);
      expect(current).toHaveLength(8);
      expect(new Set(current.map((r) => r.kind))).toEqual(new Set(['htrb', 'hotl', 'iol', 'thb', 'tc', 'ac', 'htsl']));
      const blocked = current.filter((r) => r.checkResult?.blocking);
      expect(blocked.map((r) => r.name)).toEqual(['DRAFT powered life, forced IB 0.6 mA, 85 °C chamber']);
      expect(blocked[0].checkResult?.findings.find((f) => f.code === 'thermal-runaway')?.severity).toBe('block');
      const htrb = rows.filter((r) => r.kind === 'htrb').sort((a, b) => a.version - b.version);
      expect(htrb.map((r) => [r.version, r.current])).toEqual([
        [1, false],
        [2, true],
      ]);
      expect(htrb[0].planKey).toBe(htrb[1].planKey);
      expect(htrb[0].createdAt.getTime()).toBeLessThan(htrb[1].createdAt.getTime());
      for (const r of rows) expect(r.createdById).not.toBeNull();
    } finally {
      await db.drop();
    }
  });
});

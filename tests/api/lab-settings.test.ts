/**
 * The lab's hold settings (/api/lab-settings): everyone signed in reads them, admins change them with
 * a reason (audited, values before and after); bad input gets a clear error and changes nothing.
 */
import { AuditLogEntity, LabSettingsEntity } from '../../server/db/entities';
import { readHoldSettings } from '../../server/modules/lab-settings/lab-settings.data';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t.close();
});

const row = () => t.ctx.ds.getRepository(LabSettingsEntity).findOneByOrFail({ id: 1 });

describe('lab settings', () => {
  it('the migration seeds the defaults (bias off at 35 °C, safe to open at 40 °C); an operator reads them', async () => {
    const op = await t.signIn('operator');
    const res = await op.get('/api/lab-settings');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ coolUnderBiasToC: 35, safeToOpenC: 40, updatedAt: null, updatedByName: null });
  });

  it('only an admin may change them', async () => {
    for (const role of ['operator', 'engineer', 'manager'] as const) {
      const res = await (await t.signIn(role)).put('/api/lab-settings').send({ safeToOpenC: 45, reason: 'Cooler gloves policy' });
      expect(res.status).toBe(403);
    }
    expect((await row()).safeToOpenC).toBe(40);
  });

  it.each([
    [
      { safeToOpenC: 25, reason: 'Colder' },
      'safeToOpenC',
      'Safe to open at: at least 26 °C (the chamber cools towards room ambient and never quite reaches it)',
    ],
    [{ safeToOpenC: 61, reason: 'Hotter' }, 'safeToOpenC', 'Safe to open at: at most 60 °C'],
    [{ coolUnderBiasToC: 101, reason: 'Hotter' }, 'coolUnderBiasToC', 'Remove bias at: at most 100 °C'],
    [{ coolUnderBiasToC: '40', reason: 'Text' }, 'coolUnderBiasToC', 'Remove bias at: enter a temperature in °C'],
    [{ safeToOpenC: 45 }, 'reason', 'Say why the setting changes'],
    [{ safeToOpenC: 45, reason: 'x' }, 'reason', 'Say why the setting changes'],
    [{ safeToOpenC: 45, reason: 'Policy', extra: 1 }, '', ''],
  ])('refuses %j with a clear error and changes nothing', async (body, field, message) => {
    const admin = await t.signIn('admin');
    const before = await tableCounts(t.ctx.ds);
    const res = await admin.put('/api/lab-settings').send(body);
    expect(res.status).toBe(400);
    if (field) expect(res.body.error.fields[field]).toEqual([message]);
    else expect(res.body.error.message).toMatch(/extra/);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    expect(await row()).toMatchObject({ coolUnderBiasToC: 35, safeToOpenC: 40, updatedAt: null });
  });

  it('refuses a change of nothing', async () => {
    const res = await (await t.signIn('admin')).put('/api/lab-settings').send({ reason: 'Nothing really' });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/Nothing to change/);
  });

  it('an admin changes one setting: stored, audited with the reason and both values, used by the scheduler', async () => {
    const admin = await t.signIn('admin');
    const res = await admin.put('/api/lab-settings').send({ safeToOpenC: 45, reason: 'Lab rule LR-12: gloves rated to 50 °C' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ coolUnderBiasToC: 35, safeToOpenC: 45, updatedByName: expect.any(String) });
    expect(Date.parse(res.body.updatedAt)).not.toBeNaN();
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findBy({ action: 'lab-settings.update' });
    expect(audit).toHaveLength(1);
    expect(audit[0]).toMatchObject({
      actor: 'admin@test.example',
      entity: 'lab-settings',
      reason: 'Lab rule LR-12: gloves rated to 50 °C',
      details: { before: { coolUnderBiasToC: 35, safeToOpenC: 40 }, after: { coolUnderBiasToC: 35, safeToOpenC: 45 } },
    });
    expect(await readHoldSettings(t.ctx.ds.manager)).toEqual({ coolUnderBiasToC: 35, safeToOpenC: 45 });
    const op = await t.signIn('operator');
    expect((await op.get('/api/lab-settings')).body).toMatchObject({ safeToOpenC: 45 });
  });
});

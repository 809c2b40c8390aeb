import { AuditLogEntity, DeviceTypeEntity } from '../../server/db/entities';
import { createTestApp, emailFor, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(async () => {
  await t.close();
});

/** Invented demo part (Harrowgate Power Devices). */
const HPD_2N140 = {
  partNumber: 'HPD-2N140',
  description: 'NPN medium-power switching transistor, 140 V',
  kind: 'bjt',
  polarity: 'NPN',
  bvcboV: 140,
  bvceoV: 80,
  bveboV: 6,
  icMaxA: 1.5,
  pMaxW: 12.5,
  tjMaxC: 150,
  thetaJcCPerW: 10,
  thetaJaCPerW: 83.3,
  betaRef: 120,
  betaRefIcA: 0.15,
  xtb: 1.6,
  icboRefA: 20e-9,
};

describe('device types', () => {
  let id: string;

  it('an engineer creates a device type; defaults are filled and the create is audited', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/device-types').send(HPD_2N140);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ partNumber: 'HPD-2N140', bvcboV: 140, pRatedAtC: 25, betaRefTC: 25, breakdownN: 3 });
    expect(typeof res.body.createdAt).toBe('string');
    id = res.body.id;
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'device-type.create', entityId: id });
    expect(audit.actor).toBe(emailFor('engineer'));
  });

  it('lists and gets it, for every role, with lot/device/plan counts in the list', async () => {
    for (const role of ['engineer', 'operator', 'manager', 'admin'] as const) {
      const agent = await t.signIn(role);
      const list = await agent.get('/api/device-types');
      expect(list.status).toBe(200);
      expect(list.body.items).toEqual([
        expect.objectContaining({ id, partNumber: 'HPD-2N140', lotCount: 0, deviceCount: 0, planCount: 0 }),
      ]);
    }
    const eng = await t.signIn('engineer');
    const one = await eng.get(`/api/device-types/${id}`);
    expect(one.status).toBe(200);
    expect(Object.keys(one.body).sort()).toEqual(
      [
        'id',
        'partNumber',
        'description',
        'kind',
        'polarity',
        'bvcboV',
        'bvceoV',
        'bveboV',
        'icMaxA',
        'pMaxW',
        'pRatedAtC',
        'tjMaxC',
        'tstgMinC',
        'tstgMaxC',
        'thetaJcCPerW',
        'thetaJaCPerW',
        'betaRef',
        'betaRefIcA',
        'betaRefTC',
        'xtb',
        'icboRefA',
        'icboHotA',
        'icboHotC',
        'icboHotVcbV',
        'sbKneeV',
        'sbSlopeN',
        'breakdownN',
        'createdAt',
        'updatedAt',
      ].sort(),
    );
    const search = await eng.get('/api/device-types?q=2n1');
    expect(search.body.items).toHaveLength(1);
    const none = await eng.get('/api/device-types?q=zzz');
    expect(none.body.items).toEqual([]);
  });

  it('refuses a duplicate part number with 409 and a plain message, changing nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post('/api/device-types').send(HPD_2N140);
    expect(res.status).toBe(409);
    expect(res.body.error).toEqual({ code: 'conflict', message: 'A device type with the part number HPD-2N140 already exists.' });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses invalid ratings field by field, with exact messages, changing nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post('/api/device-types').send({ ...HPD_2N140, partNumber: '', polarity: 'XYZ', bvcboV: -5 });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('bad_request');
    expect(Object.keys(res.body.error.fields).sort()).toEqual(['bvcboV', 'partNumber', 'polarity']);
    expect(res.body.error.fields.partNumber).toEqual(['Enter a part number']);
    expect(res.body.error.message).toBe('The request body is not valid (partNumber: Enter a part number).');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses physically impossible ratings: BVCEO above BVCBO, θjc not below θja', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post('/api/device-types').send({ ...HPD_2N140, partNumber: 'HPD-X1', bvceoV: 150, thetaJcCPerW: 90 });
    expect(res.status).toBe(400);
    expect(res.body.error.fields).toEqual({
      bvceoV: ['BVCEO cannot be higher than BVCBO (the open-base breakdown is the lower of the two)'],
      thetaJcCPerW: ['θjc must be smaller than θja (junction-to-ambient includes the case)'],
    });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('PATCH changes only the given fields (no defaults sneak in) and audits the before/after', async () => {
    const eng = await t.signIn('engineer');
    await t.ctx.ds.getRepository(DeviceTypeEntity).update({ id }, { xtb: 1.7, breakdownN: 4 });
    const res = await eng.patch(`/api/device-types/${id}`).send({ description: 'Revised data sheet B', bvceoV: 85 });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ description: 'Revised data sheet B', bvceoV: 85, xtb: 1.7, breakdownN: 4, bvcboV: 140 });
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'device-type.update', entityId: id });
    expect(audit.details).toMatchObject({
      mode: 'patch',
      changes: { description: { to: 'Revised data sheet B' }, bvceoV: { from: 80, to: 85 } },
    });
    expect(Object.keys(audit.details.changes).sort()).toEqual(['bvceoV', 'description']);
  });

  it('PATCH checks the merged ratings, refuses unknown fields and an empty body', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const high = await eng.patch(`/api/device-types/${id}`).send({ bvceoV: 200 });
    expect(high.status).toBe(400);
    expect(high.body.error.fields).toEqual({
      bvceoV: ['BVCEO cannot be higher than BVCBO (the open-base breakdown is the lower of the two)'],
    });
    const unknown = await eng.patch(`/api/device-types/${id}`).send({ colour: 'red' });
    expect(unknown.status).toBe(400);
    const empty = await eng.patch(`/api/device-types/${id}`).send({});
    expect(empty.status).toBe(400);
    expect(empty.body.error.message).toBe('The request body is not valid (Nothing to change).');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('PUT replaces the whole record (omitted defaulted fields go back to their defaults)', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.put(`/api/device-types/${id}`).send({ ...HPD_2N140, description: 'Replaced' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ description: 'Replaced', bvceoV: 80, xtb: 1.6, breakdownN: 3 });
  });

  it('renaming onto an existing part number is a 409; an unknown id a 404; a bad id a 400', async () => {
    const eng = await t.signIn('engineer');
    const other = await eng.post('/api/device-types').send({ ...HPD_2N140, partNumber: 'HPD-3P90', polarity: 'PNP' });
    expect(other.status).toBe(201);
    const before = await tableCounts(t.ctx.ds);
    const clash = await eng.patch(`/api/device-types/${other.body.id}`).send({ partNumber: 'HPD-2N140' });
    expect(clash.status).toBe(409);
    expect(clash.body.error.message).toBe('A device type with the part number HPD-2N140 already exists.');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const missing = await eng.get('/api/device-types/00000000-0000-4000-8000-000000000000');
    expect(missing.status).toBe(404);
    expect(missing.body.error.message).toBe('The device type was not found.');
    expect((await eng.get('/api/device-types/nope')).status).toBe(400);
  });

  it('only engineers write; other roles are refused with 403', async () => {
    for (const role of ['operator', 'manager', 'admin'] as const) {
      const agent = await t.signIn(role);
      const res = await agent.post('/api/device-types').send({ ...HPD_2N140, partNumber: `HPD-${role}` });
      expect(res.status).toBe(403);
    }
  });
});

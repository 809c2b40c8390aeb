import { AuditLogEntity, DeviceEntity } from '../../server/db/entities';
import { SERIAL_CSV_MAX_BYTES } from '../../server/modules/lots/serial-csv';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';

let t: TestApp;
let typeId: string;
beforeAll(async () => {
  t = await createTestApp();
  const eng = await t.signIn('engineer');
  const res = await eng.post('/api/device-types').send({
    partNumber: 'HPD-3P90',
    polarity: 'PNP',
    bvcboV: 100,
    bvceoV: 60,
    bveboV: 5,
    icMaxA: 3,
    pMaxW: 40,
    tjMaxC: 150,
    thetaJcCPerW: 3.125,
    thetaJaCPerW: 62.5,
    betaRef: 70,
    betaRefIcA: 1,
  });
  expect(res.status).toBe(201);
  typeId = res.body.id;
});
afterAll(async () => {
  await t.close();
});

const csv = (text: string) => Buffer.from(text, 'utf8');

describe('lots', () => {
  let lotId: string;

  it('creates a lot with a typed list of serials (trimmed), audited', async () => {
    const eng = await t.signIn('engineer');
    const res = await eng.post('/api/lots').send({
      code: 'HG2609-D',
      deviceTypeId: typeId,
      quantity: 3000,
      dateCode: '2609',
      serials: ['D0002', ' D0001 ', 'D0003'],
    });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ code: 'HG2609-D', partNumber: 'HPD-3P90', quantity: 3000, deviceCount: 3 });
    expect(res.body.serials.map((s: { serial: string }) => s.serial)).toEqual(['D0001', 'D0002', 'D0003']);
    lotId = res.body.id;
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'lot.create', entityId: lotId });
    expect(audit.details).toMatchObject({ code: 'HG2609-D', serials: 3 });
  });

  it('lists lots for every role, filtered by device type and searched by code', async () => {
    const eng = await t.signIn('engineer');
    await eng.post('/api/lots').send({ code: 'HG2610-E', deviceTypeId: typeId, quantity: 3000 }).expect(201);
    const op = await t.signIn('operator');
    const all = await op.get('/api/lots');
    expect(all.status).toBe(200);
    expect(all.body.items.map((l: { code: string }) => l.code).sort()).toEqual(['HG2609-D', 'HG2610-E']);
    const byType = await op.get(`/api/lots?deviceTypeId=${typeId}`);
    expect(byType.body.items).toHaveLength(2);
    const other = await op.get('/api/lots?deviceTypeId=00000000-0000-4000-8000-000000000000');
    expect(other.body.items).toEqual([]);
    const search = await op.get('/api/lots?q=2609');
    expect(search.body.items).toEqual([expect.objectContaining({ code: 'HG2609-D', deviceCount: 3 })]);
    const one = await op.get(`/api/lots/${lotId}`);
    expect(one.body.serials).toHaveLength(3);
    const types = await op.get('/api/device-types');
    expect(types.body.items[0]).toMatchObject({ lotCount: 2, deviceCount: 3 });
  });

  it('refuses a duplicate lot code (any case) with 409, changing nothing', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng.post('/api/lots').send({ code: 'hg2609-d', deviceTypeId: typeId, quantity: 10 });
    expect(res.status).toBe(409);
    expect(res.body.error).toEqual({ code: 'conflict', message: 'A lot with the code hg2609-d already exists.' });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses a new lot whose list has bad rows: reports every one, stores nothing (not even the lot)', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const res = await eng
      .post('/api/lots')
      .send({ code: 'HG2611-X', deviceTypeId: typeId, quantity: 100, serials: ['X1', '', 'X1', 'Y'.repeat(41), 'X2'] });
    expect(res.status).toBe(422);
    expect(res.body.error.rows).toEqual([
      { row: 2, serial: '', reason: 'Empty serial' },
      { row: 3, serial: 'X1', reason: 'Duplicate of row 1' },
      { row: 4, serial: 'Y'.repeat(41), reason: 'Longer than 40 characters' },
    ]);
    expect(res.body.error.fields).toEqual({
      'serials.2': ['Empty serial'],
      'serials.3': ['Duplicate of row 1'],
      'serials.4': ['Longer than 40 characters'],
    });
    expect(res.body.error.message).toBe('3 of 5 serials are not usable; nothing was stored. First: row 2 — Empty serial.');
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('refuses more serials than the lot holds, and an unknown device type', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const big = await eng.post('/api/lots').send({ code: 'HG2611-Y', deviceTypeId: typeId, quantity: 2, serials: ['A', 'B', 'C'] });
    expect(big.status).toBe(422);
    expect(big.body.error.message).toBe('Lot HG2611-Y holds 2 devices; 3 more would make 3. Check the list against the lot traveller.');
    const unknown = await eng
      .post('/api/lots')
      .send({ code: 'HG2611-Z', deviceTypeId: '00000000-0000-4000-8000-000000000000', quantity: 2 });
    expect(unknown.status).toBe(422);
    expect(unknown.body.error.message).toBe('The device type for this lot was not found. Choose one from the list.');
    const invalid = await eng.post('/api/lots').send({ code: '', deviceTypeId: 'x', quantity: 0 });
    expect(invalid.status).toBe(400);
    expect(invalid.body.error.fields).toMatchObject({ code: ['Enter a lot code'], deviceTypeId: ['Choose a device type'] });
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
  });

  it('adds serials later; one already in the lot refuses the whole list', async () => {
    const eng = await t.signIn('engineer');
    const before = await tableCounts(t.ctx.ds);
    const bad = await eng.post(`/api/lots/${lotId}/serials`).send({ serials: ['D0004', 'D0002'] });
    expect(bad.status).toBe(422);
    expect(bad.body.error.rows).toEqual([{ row: 2, serial: 'D0002', reason: 'Already in lot HG2609-D' }]);
    expect(await tableCounts(t.ctx.ds)).toEqual(before);
    const ok = await eng.post(`/api/lots/${lotId}/serials`).send({ serials: ['D0004', 'D0005'] });
    expect(ok.status).toBe(200);
    expect(ok.body.deviceCount).toBe(5);
    const audit = await t.ctx.ds.getRepository(AuditLogEntity).findOneByOrFail({ action: 'lot.serials.add', entityId: lotId });
    expect(audit.details).toMatchObject({ added: 2, source: 'list' });
  });

  describe('CSV upload (all or nothing)', () => {
    it('a good file with a "serial" header among other columns adds every serial', async () => {
      const eng = await t.signIn('engineer');
      const file = '\ufeffsocket,Serial,note\r\n1,D0101,ok\r\n2,"D0102",\r\n3,D0103,x\r\n';
      const res = await eng
        .post(`/api/lots/${lotId}/serials/csv`)
        .attach('file', csv(file), { filename: 'hg2609-d.csv', contentType: 'text/csv' });
      expect(res.status).toBe(200);
      expect(res.body.deviceCount).toBe(8);
      const audits = await t.ctx.ds
        .getRepository(AuditLogEntity)
        .find({ where: { action: 'lot.serials.add', entityId: lotId }, order: { id: 'DESC' } });
      expect(audits[0].details).toMatchObject({ added: 3, source: 'file', fileName: 'hg2609-d.csv' });
    });

    it('a single-column file without a header works too', async () => {
      const eng = await t.signIn('engineer');
      const res = await eng.post(`/api/lots/${lotId}/serials/csv`).attach('file', csv('D0201\nD0202\n'), 'list.csv');
      expect(res.status).toBe(200);
      expect(res.body.deviceCount).toBe(10);
    });

    it('a file with bad rows reports each by line and reason, and stores nothing', async () => {
      const eng = await t.signIn('engineer');
      const before = await tableCounts(t.ctx.ds);
      const file = ['serial', 'D0301', '', 'D0301', 'D0001', 'Z'.repeat(41), 'D0302'].join('\n') + '\n';
      const res = await eng.post(`/api/lots/${lotId}/serials/csv`).attach('file', csv(file), 'bad.csv');
      expect(res.status).toBe(422);
      expect(res.body.error.rows).toEqual([
        { row: 3, serial: '', reason: 'Empty serial' },
        { row: 4, serial: 'D0301', reason: 'Duplicate of row 2' },
        { row: 5, serial: 'D0001', reason: 'Already in lot HG2609-D' },
        { row: 6, serial: 'Z'.repeat(41), reason: 'Longer than 40 characters' },
      ]);
      expect(res.body.error.fields['line.5']).toEqual(['Already in lot HG2609-D']);
      expect(res.body.error.message).toBe('4 of 6 rows in the file are not usable; nothing was stored. First: line 3 — Empty serial.');
      expect(await tableCounts(t.ctx.ds)).toEqual(before);
      expect(await t.ctx.ds.getRepository(DeviceEntity).countBy({ lotId })).toBe(10);
    });

    it('a file that repeats serials already in the lot is refused whole', async () => {
      const eng = await t.signIn('engineer');
      const before = await tableCounts(t.ctx.ds);
      const res = await eng.post(`/api/lots/${lotId}/serials/csv`).attach('file', csv('D0101\nD0102\n'), 'again.csv');
      expect(res.status).toBe(422);
      expect(res.body.error.rows.map((r: { reason: string }) => r.reason)).toEqual(['Already in lot HG2609-D', 'Already in lot HG2609-D']);
      expect(await tableCounts(t.ctx.ds)).toEqual(before);
    });

    it('a NUL inside a serial is reported on its row (422), not a failed database query', async () => {
      const eng = await t.signIn('engineer');
      const before = await tableCounts(t.ctx.ds);
      const res = await eng.post(`/api/lots/${lotId}/serials/csv`).attach('file', csv('serial\nD0401\nQ\u0000x\n'), 'nul.csv');
      expect(res.status).toBe(422);
      expect(res.body.error.rows).toHaveLength(1);
      expect(res.body.error.rows[0]).toMatchObject({ row: 3 });
      expect(res.body.error.rows[0].reason).toMatch(/control character/);
      expect(await tableCounts(t.ctx.ds)).toEqual(before);
    });

    it('refuses files it cannot read: several columns without "serial", empty, no file, too large (413)', async () => {
      const eng = await t.signIn('engineer');
      const before = await tableCounts(t.ctx.ds);
      const wide = await eng.post(`/api/lots/${lotId}/serials/csv`).attach('file', csv('a,b\n1,2\n'), 'wide.csv');
      expect(wide.status).toBe(400);
      expect(wide.body.error.message).toBe(
        'The file has 2 columns and none is headed "serial". Add that header, or keep a single column of serials.',
      );
      const empty = await eng.post(`/api/lots/${lotId}/serials/csv`).attach('file', csv('\n'), 'empty.csv');
      expect(empty.status).toBe(400);
      expect(empty.body.error.message).toBe('The file is empty: give one serial per line, or a column headed "serial".');
      const none = await eng.post(`/api/lots/${lotId}/serials/csv`).field('x', '1');
      expect(none.status).toBe(400);
      expect(none.body.error.message).toBe('Attach the serial list as a CSV file in the form field "file".');
      const big = await eng.post(`/api/lots/${lotId}/serials/csv`).attach('file', Buffer.alloc(SERIAL_CSV_MAX_BYTES + 1, 'A'), 'big.csv');
      expect(big.status).toBe(413);
      expect(big.body.error).toEqual({ code: 'too_large', message: 'The file is larger than the upload limit.' });
      expect(await tableCounts(t.ctx.ds)).toEqual(before);
    });

    it('parse-csv reads a file for the new-lot form without storing anything', async () => {
      const eng = await t.signIn('engineer');
      const before = await tableCounts(t.ctx.ds);
      const res = await eng.post('/api/lots/serials/parse-csv').attach('file', csv('serial\nN1\nN2\nN1\n'), 'new.csv');
      expect(res.status).toBe(200);
      expect(res.body).toEqual({ serials: ['N1', 'N2'], rows: [{ row: 4, serial: 'N1', reason: 'Duplicate of row 2' }], total: 3 });
      expect(await tableCounts(t.ctx.ds)).toEqual(before);
    });

    it('operators and managers cannot upload', async () => {
      const op = await t.signIn('operator');
      const res = await op.post(`/api/lots/${lotId}/serials/csv`).attach('file', csv('Q1\n'), 'q.csv');
      expect(res.status).toBe(403);
    });
  });
});

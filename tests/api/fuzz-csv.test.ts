/**
 * CSV upload fuzz: read-point measurement files and lot serial lists. Wrong columns, UTF-16 with a
 * BOM, Latin-1 bytes, formula injection in cells (=HYPERLINK(…), +cmd, -2+3, @SUM), empty files,
 * a header alone, random CSV-ish text, 1 MB of garbage, hostile form fields. Every file is refused
 * with a 4xx in the error shape (row-level reasons where rows were read), nothing is stored, and the
 * server stays up. Exports: a lot code, device type and notes written as formulas come out of the
 * lot report CSV starting with a single quote.
 */
import fc from 'fast-check';
import { createTestApp, type TestApp } from '../support/api';
import { tableCounts } from '../support/db';
import { createRunFixture, draw, failWith, FUZZ_SEED, refusalProblems, replyProblems, sameCounts, show, Tally } from '../support/fuzz';

const RUNS = Number(process.env.EMBERLOT_FUZZ_CSV_RUNS ?? 36);

let t: TestApp;
let runId: string;
let lotId: string;
const tally = new Tally();
let reconciled = 0;

const HEADER = 'serial,hfe,hfe_ic_a,hfe_vce_v,icbo_a,icbo_vcb_v,vcesat_v,temp_c,measured_at';
const goodCells = ['120', '0.15', '5', '20e-9', '112', '0.22', '25', '2025-12-31T20:00:00Z'];

beforeAll(async () => {
  t = await createTestApp();
  ({ runId, lotId } = await createRunFixture(t, 'CSV'));
  for (const role of ['engineer', 'operator', 'manager'] as const) await t.signIn(role);
}, 30_000);

afterAll(async () => {
  console.log(`${tally.report(`CSV upload fuzz (seed ${FUZZ_SEED})`)}\n  ${reconciled} table-count reconciliations, all equal`);
  await t?.close();
});

// ---------------------------------------------------------------------------------------------
// Files. Serials in these files are never on the run (Z…) or are refused cells, so no row can be stored.

const FORMULAS = [
  '=HYPERLINK("http://evil.example","x")',
  "+cmd|' /C calc'!A0",
  '-2+3',
  '@SUM(A1:A2)',
  '=1+1',
  '\t=1',
  "=cmd|' /C calc'!A0",
  '+A1',
  '-A1*2',
];

interface CsvFile {
  kind: string;
  bytes: Buffer;
  fields?: Record<string, string>;
}

const text = (kind: string, s: string, fields?: Record<string, string>): CsvFile => ({ kind, bytes: Buffer.from(s, 'utf8'), fields });
const unknownRow = (i: number) => [`Z${i}`, ...goodCells].join(',');

const measurementFile: fc.Arbitrary<CsvFile> = fc.oneof(
  fc
    .array(fc.constantFrom('Serial No', 'gain', 'leak', 'Ib', 'x', 'hfe', 'serial', 'Vce', 'µA', 'when', ''), {
      minLength: 1,
      maxLength: 8,
    })
    .map((h) => text('wrong columns', `${h.join(',')}\n${h.map(() => '1').join(',')}\n`)),
  fc.nat(20).map((n) => ({
    kind: 'UTF-16 with BOM',
    bytes: Buffer.from(`\uFEFF${HEADER}\n${Array.from({ length: n + 1 }, (_, i) => unknownRow(i)).join('\n')}\n`, 'utf16le'),
  })),
  fc.nat(20).map((n) => ({
    kind: 'Latin-1 bytes',
    bytes: Buffer.from(
      `${HEADER.replace('icbo_a', 'icbo_a (\u00b5A)')}\n${Array.from({ length: n + 1 }, (_, i) => `Z\u00e9${i},${goodCells.join(',')}`).join('\n')}\n`,
      'latin1',
    ),
  })),
  fc.tuple(fc.constantFrom(...FORMULAS), fc.integer({ min: 0, max: 7 }), fc.nat(10)).map(([f, col, n]) => {
    const rows = Array.from({ length: n + 1 }, (_, i) => {
      const cells = [`C${String((i % 10) + 1).padStart(3, '0')}`, ...goodCells];
      cells[col] = f.includes(',') || f.includes('"') ? `"${f.replace(/"/g, '""')}"` : f;
      return cells.join(',');
    });
    return text('formula injection in cells', `${HEADER}\n${rows.join('\n')}\n`);
  }),
  fc.constantFrom('', '\n', '\r\n\r\n', '\uFEFF').map((s) => text('empty file / only a header', s)),
  fc.constantFrom(HEADER, `${HEADER}\n`, `\uFEFF${HEADER}\r\n`, `${HEADER}\n,,,,,,,,\n`).map((s) => text('empty file / only a header', s)),
  fc
    .string({ unit: fc.constantFrom('a', 'Z', '1', ',', ';', '\t', '"', '\n', '\r', ' ', 'é', '=', '-', '.', 'e'), maxLength: 400 })
    .map((s) => text('random CSV-ish text', `${HEADER}\n${s.replace(/^[^Z]/, 'Z')}`)),
  fc.uint8Array({ minLength: 1, maxLength: 2048 }).map((b) => ({ kind: 'binary garbage', bytes: Buffer.from(b) })),
  fc
    .tuple(
      fc.constantFrom('{bad', '{"Serial No":"nope"}', '{"x":"serial","y":"serial"}', '[]', '"serial"', '{"__proto__":"serial"}', 'null'),
      fc.constantFrom('{"icbo":"kA"}', '{"icbo":"A","extra":1}', 'x', '{}'),
      fc.constantFrom('-300', 'NaN', 'Infinity', '1e308', '25', ''),
    )
    .map(([mapping, units, defaultTempC]) =>
      text('hostile form fields', `${HEADER}\n${unknownRow(1)}\n`, { mapping, units, defaultTempC }),
    ),
);

const lotFile: fc.Arbitrary<CsvFile> = fc.oneof(
  fc
    .array(fc.constantFrom('Serial No', 'code', 'id', 'x', 'lot', 'S/N'), { minLength: 2, maxLength: 6 })
    .map((h) => text('wrong columns', `${h.join(',')}\n${h.map(() => 'Q1').join(',')}\n`)),
  fc.nat(10).map((n) => ({
    kind: 'UTF-16 with BOM',
    bytes: Buffer.from(`\uFEFFserial\n${Array.from({ length: n + 1 }, (_, i) => `Q${i}`).join('\n')}\n`, 'utf16le'),
  })),
  fc.nat(10).map((n) => ({
    kind: 'Latin-1 bytes',
    bytes: Buffer.from(`serial\n${Array.from({ length: n + 1 }, (_, i) => `Q\u00e9${i}`).join('\n')}\n`, 'latin1'),
  })),
  // Formula-looking serials together with a serial already in the lot: the file is refused as a whole.
  fc
    .tuple(fc.constantFrom(...FORMULAS), fc.nat(5))
    .map(([f, n]) =>
      text('formula injection in cells', `serial\n${Array.from({ length: n + 1 }, () => `"${f.replace(/"/g, '""')}"`).join('\n')}\nC001\n`),
    ),
  fc.constantFrom('', '\n', '\r\n', '\uFEFF', 'serial', 'serial\n', 'SERIAL\r\n\r\n').map((s) => text('empty file / only a header', s)),
  fc
    .string({ unit: fc.constantFrom('Q', '1', ',', '"', '\n', '\r', ' ', '\u0000', '\t', 'x'), maxLength: 300 })
    .map((s) => text('random CSV-ish text', `serial\nC001\n${s}`)),
  fc
    .uint8Array({ minLength: 1, maxLength: 2048 })
    .map((b) => ({ kind: 'binary garbage', bytes: Buffer.concat([Buffer.from('serial\nC001\n'), Buffer.from(b)]) })),
);

const megabyteOfGarbage = (seed: number): Buffer => {
  const b = Buffer.alloc(1024 * 1024 + 512);
  let x = seed >>> 0 || 1;
  for (let k = 0; k < b.length; k++) {
    x ^= x << 13;
    x ^= x >>> 17;
    x ^= x << 5;
    b[k] = x & 0xff;
  }
  return b;
};

async function upload(role: 'operator' | 'engineer', url: string, f: CsvFile, filename = 'fuzz.csv') {
  const agent = await t.signIn(role);
  let req = agent.post(url);
  for (const [k, v] of Object.entries(f.fields ?? {})) req = req.field(k, v);
  return req.attach('file', f.bytes, { filename, contentType: 'text/csv' });
}

describe('measurement upload fuzz', () => {
  const url = () => `/api/measurements/runs/${runId}/read-points/0/upload`;

  it('every malformed file is refused with a 4xx in the error shape (row reasons where rows were read); nothing stored', async () => {
    const problems: string[] = [];
    const files = [...draw(measurementFile, 'csv measurements', RUNS), { kind: '1 MB of garbage', bytes: megabyteOfGarbage(FUZZ_SEED) }];
    const before = await tableCounts(t.ctx.ds);
    for (const [i, f] of files.entries()) {
      const res = await upload('operator', url(), f);
      tally.add(`measurements: ${f.kind}`);
      const p = refusalProblems(res.status, res.body);
      const rows = res.body?.error?.rows as Array<{ reasons: string[] }> | undefined;
      if (rows && rows.some((r) => !Array.isArray(r.reasons) || r.reasons.length === 0)) p.push('a refused row without a reason');
      if (f.kind === 'formula injection in cells' && res.status === 422 && rows) {
        if (!rows.some((r) => r.reasons.some((x) => /formula/.test(x)))) p.push('no row names the formula cell');
      }
      if (p.length) problems.push(`measurements #${i} [${f.kind}] ${show(f.bytes.toString('latin1'), 120)} → ${p.join('; ')}`);
    }
    reconciled++;
    const after = await tableCounts(t.ctx.ds);
    if (!sameCounts(before, after)) problems.push(`the database changed: ${JSON.stringify(before)} → ${JSON.stringify(after)}`);
    expect((await t.signIn('manager').then((a) => a.get('/api/health'))).status).toBe(200);
    failWith(problems);
  }, 60_000);

  it('preview of any of them stores nothing either', async () => {
    const problems: string[] = [];
    const before = await tableCounts(t.ctx.ds);
    for (const [i, f] of draw(measurementFile, 'csv measurements preview', Math.ceil(RUNS / 3)).entries()) {
      const agent = await t.signIn('operator');
      const res = await agent.post(`${url()}?preview=1`).attach('file', f.bytes, 'preview.csv');
      tally.add(`measurements preview: ${f.kind}`);
      const p = replyProblems(res.status, res.body);
      if (p.length) problems.push(`preview #${i} [${f.kind}] → ${p.join('; ')}`);
    }
    reconciled++;
    expect(sameCounts(before, await tableCounts(t.ctx.ds))).toBe(true);
    failWith(problems);
  }, 60_000);
});

describe('lot serial-list fuzz', () => {
  it('every malformed file is refused with a 4xx in the error shape (row reasons where rows were read); nothing stored', async () => {
    const problems: string[] = [];
    const files = [...draw(lotFile, 'csv lots', RUNS), { kind: '1 MB of garbage', bytes: megabyteOfGarbage(FUZZ_SEED + 1) }];
    const before = await tableCounts(t.ctx.ds);
    for (const [i, f] of files.entries()) {
      const res = await upload('engineer', `/api/lots/${lotId}/serials/csv`, f);
      tally.add(`lot serials: ${f.kind}`);
      const p = refusalProblems(res.status, res.body, f.kind === '1 MB of garbage' ? 413 : undefined);
      const rows = res.body?.error?.rows as Array<{ row: number; reason: string }> | undefined;
      if (rows && rows.some((r) => !(r.row >= 1) || !r.reason)) p.push('a refused row without a line or reason');
      if (p.length) problems.push(`lots #${i} [${f.kind}] ${show(f.bytes.toString('latin1'), 120)} → ${p.join('; ')}`);
      // The form's parse-only endpoint reads the same files and never stores.
      const parsed = await upload('engineer', '/api/lots/serials/parse-csv', f);
      tally.add(`lot parse-csv: ${f.kind}`);
      const q = replyProblems(parsed.status, parsed.body);
      if (q.length) problems.push(`parse-csv #${i} [${f.kind}] → ${q.join('; ')}`);
    }
    reconciled++;
    const after = await tableCounts(t.ctx.ds);
    if (!sameCounts(before, after)) problems.push(`the database changed: ${JSON.stringify(before)} → ${JSON.stringify(after)}`);
    failWith(problems);
  }, 60_000);
});

// ---------------------------------------------------------------------------------------------
// Malformed multipart bodies (the envelope, not the file): truncated, wrong or missing boundary,
// broken part headers, NUL in a part header, a second file, an unexpected field name, too many fields.

const B = 'EmberlotFuzzBoundary';
const part = (name: string, content: string, filename?: string, extraHeader = '') =>
  `--${B}\r\nContent-Disposition: form-data; name="${name}"${filename !== undefined ? `; filename="${filename}"` : ''}\r\n${extraHeader}${filename !== undefined ? 'Content-Type: text/csv\r\n' : ''}\r\n${content}\r\n`;
/** A file every upload route refuses (C001 is already in the lot; it has no measurement columns). */
const REFUSED_EVERYWHERE = 'serial\nC001\n';
const wellFormed = (file: string) => `${part('file', file, 'rp.csv')}--${B}--\r\n`;

const malformedMultipart: fc.Arbitrary<{ kind: string; body: string | Buffer; contentType: string }> = fc.oneof(
  // Cut before the part's closing delimiter, so the file itself is incomplete. (A body cut only
  // inside the final "--boundary--" still carries the whole file; busboy accepts it, rightly.)
  fc.integer({ min: 1, max: wellFormed(REFUSED_EVERYWHERE).indexOf(`\r\n--${B}--`) }).map((cut) => ({
    kind: 'truncated multipart',
    body: wellFormed(REFUSED_EVERYWHERE).slice(0, cut),
    contentType: `multipart/form-data; boundary=${B}`,
  })),
  fc
    .constantFrom(
      'multipart/form-data',
      'multipart/form-data; boundary=',
      'multipart/form-data; boundary=Other',
      'multipart/mixed; boundary=x',
      'multipart/form-data; boundary="unterminated',
    )
    .map((ct) => ({
      kind: 'wrong or missing boundary',
      body: wellFormed(REFUSED_EVERYWHERE),
      contentType: ct,
    })),
  fc
    .constantFrom(
      `--${B}\r\nContent-Disposition form-data name=file\r\n\r\nx\r\n--${B}--\r\n`,
      `--${B}\r\nContent-Disposition: form-data; name="file"; filename="a\u0000b.csv"\r\n\r\nC001\r\n--${B}--\r\n`,
      `--${B}\r\n${'X-Junk: y\r\n'.repeat(3000)}Content-Disposition: form-data; name="file"; filename="a.csv"\r\n\r\nC001\r\n--${B}--\r\n`,
      `--${B}\r\nContent-Disposition: form-data; name="file"; filename="a.csv"\r\nContent-Type: text/csv\r\n`,
      `--${B}--\r\n`,
      '',
    )
    .map((body) => ({ kind: 'broken part headers', body, contentType: `multipart/form-data; boundary=${B}` })),
  fc
    .constantFrom(
      `${part('file', REFUSED_EVERYWHERE, 'a.csv')}${part('file', REFUSED_EVERYWHERE, 'b.csv')}--${B}--\r\n`,
      `${part('upload', REFUSED_EVERYWHERE, 'a.csv')}--${B}--\r\n`,
      `${Array.from({ length: 20 }, (_, i) => part(`f${i}`, 'x')).join('')}${part('file', REFUSED_EVERYWHERE, 'a.csv')}--${B}--\r\n`,
      `${part('mapping', 'x'.repeat(70 * 1024))}${part('file', REFUSED_EVERYWHERE, 'a.csv')}--${B}--\r\n`,
    )
    .map((body) => ({ kind: 'second file / unexpected field / too many fields', body, contentType: `multipart/form-data; boundary=${B}` })),
);

describe('malformed multipart envelopes on every upload route', () => {
  it('are refused with a 4xx in the error shape, nothing stored, the server up', async () => {
    const problems: string[] = [];
    const routes: Array<[string, 'operator' | 'engineer']> = [
      [`/api/measurements/runs/${runId}/read-points/0/upload`, 'operator'],
      [`/api/lots/${lotId}/serials/csv`, 'engineer'],
      ['/api/lots/serials/parse-csv', 'engineer'],
    ];
    const before = await tableCounts(t.ctx.ds);
    for (const [url, role] of routes) {
      const agent = await t.signIn(role);
      for (const [i, m] of draw(malformedMultipart, `multipart ${url.replace(/[0-9a-f-]{36}/g, ':id')}`, Math.ceil(RUNS / 2)).entries()) {
        const res = await agent.post(url).set('Content-Type', m.contentType).send(m.body);
        tally.add(`multipart: ${m.kind}`);
        // parse-csv stores nothing by design and ignores fields it does not know: it may answer 200.
        const p = url.endsWith('parse-csv') ? replyProblems(res.status, res.body) : refusalProblems(res.status, res.body);
        if (p.length) problems.push(`${url} #${i} [${m.kind}] ${show(m.body, 120)} (${m.contentType}) → ${p.join('; ')}`);
      }
    }
    reconciled++;
    if (!sameCounts(before, await tableCounts(t.ctx.ds))) problems.push('the database changed');
    expect((await (await t.signIn('manager')).get('/api/health')).status).toBe(200);
    failWith(problems);
  }, 60_000);
});

describe('exports neutralise spreadsheet formulas', () => {
  it('a lot code, part number and notes written as formulas start with a single quote in the lot report CSV', async () => {
    const eng = await t.signIn('engineer');
    const formula = "=cmd|' /C calc'!A0";
    const type = await eng.post('/api/device-types').send({
      partNumber: '@SUM(A1:A9)',
      polarity: 'NPN',
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
    expect(type.status).toBe(201);
    const lot = await eng
      .post('/api/lots')
      .send({ code: formula, deviceTypeId: type.body.id, quantity: 10, notes: '+HYPERLINK("http://evil.example")', dateCode: '-2+3' });
    expect(lot.status).toBe(201);
    const mgr = await t.signIn('manager');
    const res = await mgr.get(`/api/reports/lots/${lot.body.id}/report.csv`).buffer(true);
    expect(res.status).toBe(200);
    const rows = res.text.replace(/^\uFEFF/, '').split('\r\n');
    const cellAfter = (label: string) => {
      const line = rows.find((l) => l.startsWith(`${label},`))!;
      const v = line.slice(label.length + 1);
      return v.startsWith('"') ? v.slice(1, -1).replace(/""/g, '"') : v;
    };
    expect(cellAfter('Lot')).toBe(`'${formula}`);
    expect(cellAfter('Device type')).toBe("'@SUM(A1:A9)");
    expect(cellAfter('Lot notes')).toBe(`'+HYPERLINK("http://evil.example")`);
    expect(cellAfter('Date code')).toBe("'-2+3");
    // No cell anywhere starts a formula.
    const cells = rows.flatMap((l) => l.split(','));
    expect(cells.filter((c) => /^"?[=+@\t\r]/.test(c))).toEqual([]);
    // The download's file name keeps only safe characters.
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename="lot-[A-Za-z0-9._-]+-report\.csv"$/);
  });
});

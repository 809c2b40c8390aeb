/**
 * The ingest's COPY text (server/modules/telemetry/ingest-store.ts): whole lines per chunk, chunks
 * of about 256 KiB, every row once and in order. The reference for the number text is PostgreSQL's
 * documented COPY text format (tab-separated columns, one row per line, 't'/'f' booleans) and
 * Number.prototype.toString for the values.
 */
import { sampleCopyChunks } from '../../server/modules/telemetry/ingest-store';
import { telemetryFromReadings, type Telemetry } from '../../shared/mqtt';

const rigId = '0b5f0e2c-6a0d-4c1e-9a57-3f2d8c1b7e44';
const message = (seq: number): Telemetry =>
  telemetryFromReadings({
    v: 1,
    rig: 'BI-01',
    seq,
    ts: '2026-12-02T03:00:00.000Z',
    stressClockS: seq,
    chamberC: 85,
    humidityPct: null,
    setpointC: 85,
    sockets: Array.from({ length: 64 }, (_, i) => ({
      i,
      caseC: 95 + i / 100,
      vV: -20.5,
      iA: i === 3 ? 1e-9 : 0.30012,
      biasOn: i % 2 === 0,
      tripped: i === 5,
    })),
  });

test('one small batch is one chunk with one line per socket', () => {
  const chunks = sampleCopyChunks([{ rigId, msg: message(7) }]);
  expect(chunks).toHaveLength(1);
  const lines = chunks[0].toString('latin1').split('\n');
  expect(lines.pop()).toBe('');
  expect(lines).toHaveLength(64);
  expect(lines[0]).toBe(`${rigId}\t7\t0\t95\t-20.5\t0.30012\tt\tf`);
  expect(lines[3]).toBe(`${rigId}\t7\t3\t95.03\t-20.5\t1e-9\tf\tf`);
  expect(lines[5]).toBe(`${rigId}\t7\t5\t95.05\t-20.5\t0.30012\tf\tt`);
});

test('a batch of 200 messages splits into ~256 KiB chunks of whole lines, every row once, in order', () => {
  const rows = Array.from({ length: 200 }, (_, k) => ({ rigId, msg: message(k + 1) }));
  const chunks = sampleCopyChunks(rows);
  expect(chunks.length).toBeGreaterThan(2);
  for (const c of chunks) {
    expect(c.length).toBeLessThanOrEqual(256 * 1024);
    expect(c[c.length - 1]).toBe(10); // ends on a newline
  }
  const lines = Buffer.concat(chunks).toString('latin1').split('\n').slice(0, -1);
  expect(lines).toHaveLength(200 * 64);
  lines.forEach((line, n) => {
    const [id, seq, socket] = line.split('\t');
    expect([id, Number(seq), Number(socket)]).toEqual([rigId, Math.floor(n / 64) + 1, n % 64]);
  });
});

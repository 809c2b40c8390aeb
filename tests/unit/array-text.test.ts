/**
 * The ingest's array text (server/modules/telemetry/ingest-store.ts `arrayText`): a message's
 * socket columns go to PostgreSQL as array literals. The reference is PostgreSQL's documented array
 * input syntax (`{v1,v2,…}`, elements separated by commas; PostgreSQL 15 manual, 8.15.2) and
 * Number.prototype.toString for the values (also the COPY text the ingest used before). Parsed back
 * here by splitting on commas, every value must come back exactly.
 */
import { arrayText } from '../../server/modules/telemetry/ingest-store';
import { telemetryFromReadings, type Telemetry } from '../../shared/mqtt';

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

const back = (s: string) => s.slice(1, -1).split(',').map(Number);

test('a message’s columns as array literals, one element per socket in order', () => {
  const m = message(7);
  expect(arrayText(m.socket)).toBe(`{${Array.from({ length: 64 }, (_, i) => i).join(',')}}`);
  const caseC = arrayText(m.caseC);
  expect(caseC.startsWith('{95,95.01,95.02,95.03,')).toBe(true);
  expect(back(caseC)).toEqual(Array.from(m.caseC));
  expect(back(arrayText(m.iA))[3]).toBe(1e-9);
  expect(arrayText(m.iA).split(',')[3]).toBe('1e-9');
  // flags: bit 1 bias on, bit 2 tripped (FLAG_BIAS_ON, FLAG_TRIPPED)
  expect(back(arrayText(m.flags)).slice(0, 6)).toEqual([1, 0, 1, 0, 1, 2]);
});

test('an empty column is the empty array', () => {
  expect(arrayText([])).toBe('{}');
});

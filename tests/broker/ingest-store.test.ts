/**
 * One ingest transaction (server/modules/telemetry/ingest-store.ts) against a real PostgreSQL: the
 * rig lookup that rides with BEGIN, the rig codes written into the statement as an array literal.
 * The reference is the rigs table and the rows of telemetry_samples, read back.
 */
import { telemetryFromReadings, type Telemetry } from '../../shared/mqtt';
import { configFromEnv } from '../../server/config';
import { createContext, type AppContext } from '../../server/context';
import { writeBatch, type IngestItem } from '../../server/modules/telemetry/ingest-store';
import { pgPoolOf } from '../../server/modules/telemetry/telemetry.feature';
import { createTestDb, insertTestRig, type TestDb } from '../support/db';

let db: TestDb;
let ctx: AppContext;
const ids: Record<string, string> = {};
// "NULL" is a valid rig code (A–Z, 0–9, '-'), and unquoted in an array literal it would be a null.
const CODES = ['NULL', 'OV-9-X', 'B7'];

beforeAll(async () => {
  db = await createTestDb();
  for (const code of CODES) ids[code] = await insertTestRig(db.ds, code, { sockets: 4 });
  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
});

afterAll(async () => {
  await db?.drop();
});

const message = (rig: string, seq: number): Telemetry =>
  telemetryFromReadings({
  v: 2,
  rig,
  seq,
  ts: new Date(Date.UTC(2026, 11, 2, 6, 0, seq)).toISOString(),
  stressClockS: seq,
  chamberC: 125,
  humidityPct: null,
  setpointC: 125,
  sockets: Array.from({ length: 4 }, (_, i) => ({ i, caseC: 130 + i + seq / 100, vV: 20, iA: 0.25 + i / 1000, biasOn: i !== 2, tripped: i === 3 })),
  });

const item = (rig: string, seq: number): IngestItem => ({ kind: 'telemetry', rigCode: rig, msg: message(rig, seq), receivedAt: new Date() });

async function rowsOf(rig: string, seq: number): Promise<string[]> {
  const rows: Array<Record<string, unknown>> = await db.ds.query(
    'SELECT rig_id, socket, case_c, v_v, i_a, bias_on, tripped FROM telemetry_samples WHERE rig_id = $1 AND seq = $2 ORDER BY socket',
    [ids[rig], seq],
  );
  return rows.map((r) => JSON.stringify(r));
}

test('the rigs looked up with BEGIN: every valid code is found, "NULL" included', async () => {
  const result = await writeBatch(pgPoolOf(ctx), CODES.map((c) => item(c, 1)));
  expect(result.rejected).toBe(0);
  expect(result.newMessages).toBe(3);
  expect(result.sampleRows).toBe(12);
  for (const c of CODES) {
    expect(result.storedByRig.get(c)).toEqual([1]);
    expect(await rowsOf(c, 1)).toHaveLength(4);
    expect(JSON.parse((await rowsOf(c, 1))[0]).rig_id).toBe(ids[c]);
  }
  // An unregistered code is still refused as unknown, with the others stored.
  const mixed = await writeBatch(pgPoolOf(ctx), [item('OV-9-X', 2), item('NOPE-1', 1)]);
  expect(mixed.newMessages).toBe(1);
  expect(mixed.rejected).toBe(1);
});

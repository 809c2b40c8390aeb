/**
 * One ingest transaction (server/modules/telemetry/ingest-store.ts) against a real PostgreSQL: the
 * rig lookup that rides with BEGIN, the rig codes written into the statement as an array literal.
 * The reference is the rigs table and the rows of telemetry_samples, read back.
 */
import { parseTelemetry, telemetryFromReadings, type Telemetry } from '../../shared/mqtt';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
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
  // B7 sends a humidity value (stored as 0 below): registered with humidity control.
  for (const code of CODES) ids[code] = await insertTestRig(db.ds, code, { sockets: 4, humidityCapable: code === 'B7' });
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
    sockets: Array.from({ length: 4 }, (_, i) => ({
      i,
      caseC: 130 + i + seq / 100,
      vV: 20,
      iA: 0.25 + i / 1000,
      biasOn: i !== 2,
      tripped: i === 3,
    })),
  });

const item = (rig: string, seq: number): IngestItem => ({
  kind: 'telemetry',
  rigCode: rig,
  msg: message(rig, seq),
  receivedAt: new Date(),
});

async function rowsOf(rig: string, seq: number): Promise<string[]> {
  const rows: Array<Record<string, unknown>> = await db.ds.query(
    'SELECT rig_id, socket, case_c, v_v, i_a, bias_on, tripped FROM telemetry_samples WHERE rig_id = $1 AND seq = $2 ORDER BY socket',
    [ids[rig], seq],
  );
  return rows.map((r) => JSON.stringify(r));
}

test('the rigs looked up with BEGIN: every valid code is found, "NULL" included', async () => {
  const result = await writeBatch(
    pgPoolOf(ctx),
    CODES.map((c) => item(c, 1)),
  );
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

test('values a 4-byte float cannot hold are stored as 0, and the batch around them commits', async () => {
  // PostgreSQL refuses '1e-50'::real ("out of range for type real", PostgreSQL 15 float4in); such a
  // value inside a COPY failed the whole batch, and the ingest retried it for ever.
  const rejectedByPostgres = await pgPoolOf(ctx)
    .query(`SELECT '1e-50'::real`)
    .then(
      () => false,
      (err: Error) => /out of range for type real/.test(err.message),
    );
  expect(rejectedByPostgres).toBe(true);
  const text = JSON.stringify({
    v: 2,
    rig: 'B7',
    seq: 40,
    ts: '2026-12-02T06:00:40.000Z',
    stressClockS: 40,
    chamberC: 1e-50,
    humidityPct: 2e-45,
    setpointC: 125,
    socket: [0, 1, 2, 3],
    caseC: [1e-50, -3e-46, 1e-40, 130.5],
    vV: [20, -1e-300, 0, 20],
    iA: [1e-300, 0.25, 0.25, 0.25],
    flags: [1, 1, 1, 1],
  });
  const parsed = parseTelemetry(text);
  if (!parsed.ok) throw new Error(parsed.reason);
  expect(parsed.data).toMatchObject({
    chamberC: 0,
    humidityPct: 0,
    caseC: [0, 0, 1e-40, 130.5],
    vV: [20, 0, 0, 20],
    iA: [1e-300, 0.25, 0.25, 0.25],
  });
  const result = await writeBatch(pgPoolOf(ctx), [
    { kind: 'telemetry', rigCode: 'B7', msg: parsed.data, receivedAt: new Date() },
    item('B7', 41),
  ]);
  expect(result.newMessages).toBe(2);
  const rows = (await rowsOf('B7', 40)).map((r) => JSON.parse(r) as { case_c: number; v_v: number; i_a: number });
  // 1e-40 is a subnormal float: kept (as the nearest float); the double column keeps 1e-300.
  expect(rows.map((r) => [r.case_c, r.v_v])).toEqual([
    [0, 20],
    [0, 0],
    [1e-40, 0],
    [130.5, 20],
  ]);
  expect(rows[0].i_a).toBe(1e-300);
  const [batch] = await db.ds.query(`SELECT chamber_c, humidity_pct FROM telemetry_batches WHERE rig_id = $1 AND seq = 40`, [ids.B7]);
  expect(batch).toEqual({ chamber_c: 0, humidity_pct: 0 });
});

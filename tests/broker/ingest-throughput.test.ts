/**
 * Measures the ingest write path on this machine: the production transaction (writeBatch: headers,
 * socket rows by COPY, rig row, counters) against a baseline kept here, one transaction of the
 * same headers and the socket rows as one multi-row INSERT … SELECT unnest (the alternative the
 * ingest measured and dropped), then end to end MQTT → PostgreSQL through the real broker. Prints
 * the rates; asserts only a low floor (the machine is shared and noisy).
 */
import { createEmberlotBroker, type EmberlotBroker } from '../../broker/broker';
import { createPgAuthenticate } from '../../broker/pg-authenticate';
import { FLAG_BIAS_ON, FLAG_TRIPPED, telemetryFromReadings, topics, type Telemetry, type TelemetryReadings } from '../../shared/mqtt';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import type { Pool } from 'pg';
import { writeBatch, type IngestItem } from '../../server/modules/telemetry/ingest-store';
import { pgPoolOf, startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { createTestDb, insertTestRig, type TestDb } from '../support/db';
import { connectClient, sleep } from './mqtt-test-helpers';

jest.setTimeout(30_000);

const SOCKETS = 64;
const PER_BATCH = 200;
let db: TestDb;
let ctx: AppContext;

/** Message times near the server's clock: the ingest refuses a `ts` outside its window (TELEMETRY_TS_MAX_*). */
const T_BASE = Math.floor(Date.now() / 60_000) * 60_000 - 3_600_000;

/** One message as a rig builds it (published as v1 JSON below). */
function readings(rig: string, seq: number): TelemetryReadings {
  return {
    v: 1,
    rig,
    seq,
    ts: new Date(T_BASE + seq * 250).toISOString(),
    stressClockS: seq * 900,
    chamberC: 150 + (seq % 7) * 0.1,
    humidityPct: null,
    setpointC: 150,
    sockets: Array.from({ length: SOCKETS }, (_, i) => ({
      i,
      caseC: 151 + i * 0.05 + (seq % 5) * 0.01,
      vV: 40.2,
      iA: 0.1234 + i * 1e-4,
      biasOn: true,
      tripped: false,
    })),
  };
}

const message = (rig: string, seq: number): Telemetry => telemetryFromReadings(readings(rig, seq));

type SamplesMode = 'copy' | 'insert';

/** The baseline: the same headers, then the socket rows as one INSERT … SELECT unnest, in one transaction. */
async function insertBaseline(pool: Pool, rigCode: string, msgs: Telemetry[]): Promise<number> {
  const client = await pool.connect();
  try {
    await client.query('BEGIN; SET LOCAL synchronous_commit = on');
    const [{ id }] = (await client.query<{ id: string }>('SELECT id FROM rigs WHERE code = $1', [rigCode])).rows;
    await client.query(
      `INSERT INTO telemetry_batches (rig_id, seq, ts, stress_clock_s, chamber_c, humidity_pct, setpoint_c)
       SELECT $1::uuid, * FROM unnest($2::bigint[], $3::timestamptz[], $4::float8[], $5::real[], $6::real[], $7::real[]) ON CONFLICT DO NOTHING`,
      [
        id,
        msgs.map((m) => m.seq),
        msgs.map((m) => m.ts),
        msgs.map((m) => m.stressClockS),
        msgs.map((m) => m.chamberC),
        msgs.map((m) => m.humidityPct),
        msgs.map((m) => m.setpointC),
      ],
    );
    const cols: [string[], number[], number[], number[], number[], number[], boolean[], boolean[]] = [[], [], [], [], [], [], [], []];
    for (const msg of msgs) {
      for (let k = 0; k < msg.socket.length; k++) {
        cols[0].push(id);
        cols[1].push(msg.seq);
        cols[2].push(msg.socket[k]);
        cols[3].push(msg.caseC[k]);
        cols[4].push(msg.vV[k]);
        cols[5].push(msg.iA[k]);
        cols[6].push((msg.flags[k] & FLAG_BIAS_ON) !== 0);
        cols[7].push((msg.flags[k] & FLAG_TRIPPED) !== 0);
      }
    }
    const res = await client.query(
      `INSERT INTO telemetry_samples (rig_id, seq, socket, case_c, v_v, i_a, bias_on, tripped)
       SELECT * FROM unnest($1::uuid[], $2::bigint[], $3::smallint[], $4::real[], $5::real[], $6::float8[], $7::boolean[], $8::boolean[])`,
      cols,
    );
    await client.query('COMMIT');
    return res.rowCount ?? 0;
  } catch (err) {
    await client.query('ROLLBACK').catch(() => undefined);
    throw err;
  } finally {
    client.release();
  }
}

beforeAll(async () => {
  db = await createTestDb();
  for (const code of ['BX-COPY', 'BX-INSERT', 'BX-E2E']) {
    await insertTestRig(db.ds, code, { name: code, sockets: SOCKETS, maxVoltageV: 100, secret: 'bench-secret' });
  }
  ctx = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
});

afterAll(async () => {
  await db?.drop();
});

test('COPY (the ingest) vs multi-row INSERT (baseline) for the socket rows (rows/s)', async () => {
  const pool = pgPoolOf(ctx);
  const rounds = 4;
  const rates: Record<SamplesMode, number[]> = { copy: [], insert: [] };
  const seqs: Record<SamplesMode, number> = { copy: 0, insert: 0 };
  for (let r = 0; r < rounds; r++) {
    for (const mode of (r % 2 ? ['insert', 'copy'] : ['copy', 'insert']) as SamplesMode[]) {
      const rig = mode === 'copy' ? 'BX-COPY' : 'BX-INSERT';
      const msgs: Telemetry[] = [];
      for (let k = 0; k < PER_BATCH; k++) msgs.push(message(rig, ++seqs[mode]));
      const items: IngestItem[] = msgs.map((msg) => ({ kind: 'telemetry', rigCode: rig, msg, receivedAt: new Date() }));
      const t0 = process.hrtime.bigint();
      const sampleRows = mode === 'copy' ? (await writeBatch(pool, items)).sampleRows : await insertBaseline(pool, rig, msgs);
      const s = Number(process.hrtime.bigint() - t0) / 1e9;
      expect(sampleRows).toBe(PER_BATCH * SOCKETS);
      if (r > 0) rates[mode].push(sampleRows / s); // first round warms up
    }
  }
  const median = (a: number[]) => [...a].sort((x, y) => x - y)[Math.floor(a.length / 2)];
  const copy = Math.round(median(rates.copy));
  const insert = Math.round(median(rates.insert));
  console.log(
    `[bench] ${PER_BATCH} messages × ${SOCKETS} sockets per transaction: COPY ${copy} rows/s, INSERT unnest ${insert} rows/s (median of ${rounds - 1})`,
  );
  expect(copy).toBeGreaterThan(2_000);
  expect(insert).toBeGreaterThan(2_000);
});

test('end to end: MQTT → validate → batch → COPY → stored (samples/s)', async () => {
  const eb: EmberlotBroker = await createEmberlotBroker({
    port: 0,
    authenticate: createPgAuthenticate({ pool: pgPoolOf(ctx), server: { username: 'srv', password: 'srv-pass' } }),
  });
  const stop = await startTelemetry(ctx, {
    mqtt: { url: `mqtt://127.0.0.1:${eb.port}`, username: 'srv', password: 'srv-pass' },
    clientId: 'bench-server',
    log: () => undefined,
  });
  const rig = await connectClient(eb.port, { clientId: 'rig-BX-E2E', username: 'rig-bx-e2e', password: 'bench-secret' });
  try {
    await sleep(300);
    const N = 1500;
    const payloads = Array.from({ length: N }, (_, k) => JSON.stringify(readings('BX-E2E', k + 1)));
    const t0 = Date.now();
    for (const p of payloads) rig.publish(topics.telemetry('BX-E2E'), p, { qos: 1 });
    let n = 0;
    while (Date.now() - t0 < 25_000) {
      const [{ c }] = await db.ds.query(
        `SELECT count(*)::int AS c FROM telemetry_batches b JOIN rigs r ON r.id = b.rig_id WHERE r.code = 'BX-E2E'`,
      );
      n = c;
      if (n >= N) break;
      await sleep(50);
    }
    const s = (Date.now() - t0) / 1000;
    const st = ctx.services.telemetryIngest!.stats();
    console.log(
      `[bench] end to end: ${N} messages × ${SOCKETS} sockets in ${s.toFixed(2)} s = ${Math.round((N * SOCKETS) / s)} samples/s (${Math.round(N / s)} messages/s; ${st.batches} transactions, last ${st.lastBatchMs} ms; broker, publisher and server share one process)`,
    );
    expect(n).toBe(N);
  } finally {
    await rig.endAsync(true).catch(() => undefined);
    await stop();
    await eb.close();
  }
});

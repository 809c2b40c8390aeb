/** Issue #18 point 10 (MQTT side): rejected_messages is bounded by age and by count, pruned by a job. Real PostgreSQL. */
import { Pool } from 'pg';
import { configFromEnv } from '../../server/config';
import { createContext } from '../../server/composition';
import type { AppContext } from '../../server/context';
import { pruneRejectedMessages, REJECTED_KEEP_DAYS, REJECTED_KEEP_ROWS } from '../../server/modules/telemetry/rejections-retention';
import { startTelemetry } from '../../server/modules/telemetry/telemetry.feature';
import { createTestDb, type TestDb } from '../support/db';
import { sleep } from './mqtt-test-helpers';

let db: TestDb;
let pool: Pool;

beforeAll(async () => {
  db = await createTestDb();
  pool = new Pool({ ...db.config, max: 2 });
});

afterAll(async () => {
  await pool?.end();
  await db?.drop();
});

/** `old` rows dated 40 days ago, then `recent` rows dated now, in arrival (id) order. */
async function fill(old: number, recent: number): Promise<void> {
  await pool.query('TRUNCATE rejected_messages');
  await pool.query(
    `INSERT INTO rejected_messages (at, topic, rig_code, reason, excerpt)
     SELECT CASE WHEN k <= $1 THEN now() - interval '40 days' ELSE now() END, 'emberlot/v1/rigs/RT-01/telemetry', 'RT-01', 'test ' || k, '{}'
     FROM generate_series(1, $2::int) AS k`,
    [old, old + recent],
  );
}
const reasons = async () =>
  (await pool.query<{ reason: string }>('SELECT reason FROM rejected_messages ORDER BY id')).rows.map((r) => r.reason);

test('the defaults: 30 days and 100,000 rows', () => {
  expect([REJECTED_KEEP_DAYS, REJECTED_KEEP_ROWS]).toEqual([30, 100_000]);
});

test('rows older than the retention go, then all but the newest N', async () => {
  await fill(20, 130);
  expect(await pruneRejectedMessages(pool, { keepDays: 30, keepRows: 100 })).toBe(50);
  const left = await reasons();
  expect(left).toHaveLength(100);
  expect(left[0]).toBe('test 51');
  expect(left[99]).toBe('test 150');
  // Within both bounds: nothing to do.
  expect(await pruneRejectedMessages(pool, { keepDays: 30, keepRows: 100 })).toBe(0);
});

test('the telemetry feature prunes on its own schedule', async () => {
  await fill(5, 30);
  const ctx: AppContext = createContext(db.ds, { ...configFromEnv({} as NodeJS.ProcessEnv), db: db.config });
  // No broker on this port: the link keeps retrying; the prune job does not depend on it.
  const stop = await startTelemetry(ctx, {
    mqtt: { url: 'mqtt://127.0.0.1:1', username: 'x', password: 'y' },
    log: () => undefined,
    rejections: { pruneEveryMs: 200, keepRows: 10 },
  });
  try {
    const t0 = Date.now();
    while ((await reasons()).length > 10 && Date.now() - t0 < 5000) await sleep(50);
    const left = await reasons();
    expect(left).toHaveLength(10);
    expect(left[0]).toBe('test 26');
  } finally {
    await stop();
  }
});

/**
 * The broker process (`npm start` runs it beside the API):
 *   SWC_NODE_PROJECT=server/tsconfig.json node -r @swc-node/register broker/main.ts
 * Env: EMBERLOT_MQTT_PORT (18830), EMBERLOT_MQTT_HOST (127.0.0.1),
 *      EMBERLOT_MQTT_SERVER_USER / EMBERLOT_MQTT_SERVER_PASSWORD (privileged server client; the
 *      password and the database's come from .data/secrets.json when not given, server/secrets.ts),
 *      EMBERLOT_DB_HOST / PORT / USER / PASSWORD / NAME (rig credentials in table `rigs`),
 *      EMBERLOT_MQTT_MAX_PACKET_BYTES (262144), EMBERLOT_BROKER_LOG=1 for refusal lines,
 *      EMBERLOT_REDIS_URL (redis://127.0.0.1:16379: share state with the other brokers through
 *      Redis; unset = in memory, one broker) and EMBERLOT_BROKER_HEARTBEAT_MS (2000, Redis mode).
 */
import { Pool } from 'pg';
import { dbConfigFromEnv } from '../server/config';
import { refuseWeakSecretsOffLoopback, withSecrets } from '../server/secrets';
import { MAX_PACKET_BYTES } from '../shared/mqtt';
import { createEmberlotBroker } from './broker';
import { createPgAuthenticate } from './pg-authenticate';

const int = (v: string | undefined, d: number) => (v && /^\d+$/.test(v) ? Number(v) : d);

async function main(): Promise<void> {
  // The server account's password and the database's: the environment, else .data/secrets.json.
  const env = withSecrets(process.env).env;
  const port = int(env.EMBERLOT_MQTT_PORT, 18830);
  const host = env.EMBERLOT_MQTT_HOST ?? '127.0.0.1';
  const db = dbConfigFromEnv(env);
  const pool = new Pool({ ...db, max: 4, connectionTimeoutMillis: 5000 });
  pool.on('error', (err) => console.error(`[broker] database pool error: ${err.message}`));

  const serverUser = env.EMBERLOT_MQTT_SERVER_USER ?? 'emberlot-server';
  const serverPassword = env.EMBERLOT_MQTT_SERVER_PASSWORD!;
  refuseWeakSecretsOffLoopback('the MQTT broker', host, { mqttServerPassword: serverPassword, dbPassword: db.password });
  const verbose = env.EMBERLOT_BROKER_LOG === '1';
  const redisUrl = env.EMBERLOT_REDIS_URL || null;

  const eb = await createEmberlotBroker({
    host,
    port,
    maxPacketBytes: int(env.EMBERLOT_MQTT_MAX_PACKET_BYTES, MAX_PACKET_BYTES),
    authenticate: createPgAuthenticate({ pool, server: { username: serverUser, password: serverPassword } }),
    // Stale wills and Redis trouble are always worth a line; refusals only when asked.
    log: verbose
      ? (line) => console.log(`[broker] ${line}`)
      : (line) => (/stale|redis|broker error/.test(line) ? console.log(`[broker] ${line}`) : undefined),
    ...(redisUrl ? { redis: { url: redisUrl, heartbeatIntervalMs: int(env.EMBERLOT_BROKER_HEARTBEAT_MS, 2000) } } : {}),
  });
  const mode = redisUrl ? `shared through ${redisUrl}` : 'in memory';
  console.log(
    `[broker] Emberlot MQTT broker listening on mqtt://${host}:${eb.port} (${mode}; database ${db.host}:${db.port}/${db.database})`,
  );

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    // Redis mode: a session clean-up still running when its connection closes rejects with
    // "Connection is closed"; on the way out that is a line, not a crash.
    process.on('unhandledRejection', (err) => console.log(`[broker] while closing: ${err instanceof Error ? err.message : String(err)}`));
    console.log(`[broker] ${signal}: closing (counters ${JSON.stringify({ ...eb.counters, connectedRigs: eb.counters.connectedRigs })})`);
    const force: { unref?: () => void } = setTimeout(() => process.exit(1), 5000) as never;
    force.unref?.();
    await eb.close().catch(() => undefined);
    await pool.end().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
}

main().catch((err) => {
  console.error(`[broker] failed to start: ${err instanceof Error ? err.message : err}`);
  process.exit(1);
});

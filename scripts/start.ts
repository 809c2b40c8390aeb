/**
 * `npm start`: one command that brings up the whole product on 127.0.0.1 with demo data.
 * PostgreSQL (private cluster) → migrations + demo seed → web export (only when its sources
 * changed) → the processes in scripts/processes.ts (fake SMTP, MQTT broker, API serving the web
 * app, rig simulator). Ctrl-C stops every child and the database cleanly.
 *
 * --dev: the Expo dev server (hot reload) behind the API's origin instead of the static export.
 * --cluster (`npm run start:cluster`): the multi-node layout on loopback instead (README "Cluster
 * layout"): a private Redis (scripts/redis-server.ts), two brokers sharing state through it, two API
 * processes, the simulator and the mail sink (scripts/processes.ts clusterProcesses).
 */
import 'reflect-metadata';
import * as path from 'node:path';
import { configFromEnv } from '../server/config';
import { refuseWeakSecretsOffLoopback, SECRET_ENV, withSecrets, type ResolvedSecrets } from '../server/secrets';
import { createDataSource } from '../server/db/data-source';
import { DEMO_USERS } from '../server/seed/demo-data';
import { seedIfEmpty } from '../server/seed/seed';
import { writeDemoFleet } from './demo-fleet';
import { ensureDatabase, PROJECT_ROOT, startCluster, stopCluster } from './pg-cluster';
import { clusterProcesses, type ClusterPorts } from './processes';
import { destroyRedis, startRedis, type RedisOptions } from './redis-server';
import { startStack, type Stack } from './stack';
import { ensureWebExport, WEB_DIR } from './web-export';

const dev = process.argv.includes('--dev');
const pgPort = Number(process.env.EMBERLOT_PG_PORT ?? 54329);
const cluster = process.argv.includes('--cluster');
/**
 * The demo's Redis starts empty every time (no RDB/AOF): the brokers' shared state is transient —
 * the rigs' outboxes and the server's command re-sends make delivery whole — and a previous run's
 * sessions, wills and registry entries would only confuse a fresh demo.
 */
const REDIS: RedisOptions = { name: 'cluster', port: Number(process.env.EMBERLOT_REDIS_PORT ?? 16379), throwaway: true };

async function main() {
  const t0 = Date.now();
  // Every process gets the same secrets: from the environment, else .data/secrets.json (made now on first start).
  const secrets = withSecrets(process.env);
  const baseEnv: NodeJS.ProcessEnv = { ...process.env, ...secrets.env, EMBERLOT_DB_PORT: String(pgPort) };
  const config = configFromEnv(baseEnv);
  const mqttHost = baseEnv.EMBERLOT_MQTT_HOST ?? '127.0.0.1';
  const all = { sessionSecret: config.sessionSecret, mqttServerPassword: config.mqtt.password, dbPassword: config.db.password };
  refuseWeakSecretsOffLoopback('the API', config.host, all);
  refuseWeakSecretsOffLoopback('the MQTT broker', mqttHost, all);
  const pg = startCluster({ name: 'demo', port: pgPort, password: config.db.password });
  await ensureDatabase(pg, config.db.database);
  const ds = createDataSource(config.db);
  await ds.initialize();
  await seedIfEmpty(ds);
  const fleetFile = path.join(PROJECT_ROOT, '.data', 'demo-fleet.json');
  const fleet = await writeDemoFleet(ds, fleetFile);
  console.log(`[start] rig simulator: ${fleet.rigs} rigs, ${fleet.loaded} loaded sockets`);
  await ds.destroy();
  if (!dev) ensureWebExport();

  let stack: Stack | null = null;
  let stopping = false;
  const stopAll = async (code: number) => {
    if (stopping) return;
    stopping = true;
    console.log('\n[start] stopping…');
    await stack?.stop();
    if (cluster) await destroyRedis(REDIS).catch(() => undefined);
    stopCluster({ name: 'demo', port: pgPort });
    process.exit(code);
  };
  process.on('SIGINT', () => void stopAll(0));
  process.on('SIGTERM', () => void stopAll(0));

  let layout: ClusterPorts | null = null;
  if (cluster) {
    await destroyRedis(REDIS);
    const redis = await startRedis(REDIS);
    const mqttPort = Number(baseEnv.EMBERLOT_MQTT_PORT ?? 18830);
    layout = {
      brokers: [mqttPort, Number(baseEnv.EMBERLOT_MQTT_PORT_B ?? mqttPort + 1)],
      apis: [config.port, Number(baseEnv.EMBERLOT_PORT_B ?? config.port + 1)],
      redisUrl: redis.url,
    };
  }
  stack = await startStack({
    ...(layout ? { processes: clusterProcesses(layout) } : {}),
    dev,
    env: {
      ...baseEnv,
      EMBERLOT_WEB_DIR: dev ? '' : WEB_DIR,
      EMBERLOT_DEV_PROXY: dev ? 'http://127.0.0.1:8081' : '',
      EMBERLOT_SIM_CONFIG: fleetFile,
    },
    onUnexpectedExit: (name, code, sig) => {
      // The cluster layout survives a node: a broker or API process may die (or be killed for the
      // demo) while its twin carries on; only the last of a kind, or any other process, stops all.
      const twin = layout && /^(broker|api)-/.test(name) ? name.replace(/-(a|b|1|2)$/, '') : null;
      const alive = (stack?.children ?? []).filter(
        ({ spec, child }) =>
          twin && spec.name !== name && spec.name.startsWith(`${twin}-`) && child.exitCode === null && child.signalCode === null,
      );
      if (alive.length) {
        console.error(`[start] ${name} exited (${code ?? sig}); ${alive.map((c) => c.spec.name).join(', ')} carries on`);
        return;
      }
      console.error(`[start] ${name} exited (${code ?? sig}); stopping everything`);
      void stopAll(1);
    },
  });

  const url = `http://127.0.0.1:${config.port}`;
  const layoutLine = layout
    ? `\n  Cluster layout: Redis ${layout.redisUrl}, brokers mqtt://127.0.0.1:${layout.brokers.join(' and :')}, API processes on :${layout.apis.join(' and :')}
  (kill a broker's process: the rigs and the API move to the other one; README "Cluster layout").\n`
    : '';
  console.log(`
  Emberlot is running at ${url}   (ready in ${Math.round((Date.now() - t0) / 1000)} s; Ctrl-C stops everything)

  Secrets: ${describeSecrets(secrets)}
${layoutLine}
  Demo sign-ins (the invented lab of Harrowgate Power Devices):
${DEMO_USERS.map((u) => `    ${u.role.padEnd(9)} ${u.email.padEnd(34)} ${u.password}`).join('\n')}

  Safety: Emberlot's software trip is no substitute for a rig's hardware interlocks. Follow your
  lab's safety rules and local codes around high voltage, hot ovens and parts that can burst.
`);
}

function describeSecrets(s: ResolvedSecrets): string {
  const fileNames = [...s.generated, ...s.fromFile];
  if (!fileNames.length) return 'all from the environment.';
  const what =
    s.generated.length === fileNames.length ? 'generated now' : s.generated.length ? 'some generated now' : 'generated on first start';
  return `${s.file} (${what}; owner-only, mode 600)${s.fromEnv.length ? `; from the environment: ${s.fromEnv.map((n) => SECRET_ENV[n]).join(', ')}` : ''}.
  It holds the session secret, the broker's server-account password and the database password
  (those not given in the environment); for production set them in the environment instead
  (README, "Production settings").`;
}

main().catch((e) => {
  console.error('[start] failed:', e instanceof Error ? e.message : e);
  if (cluster) void destroyRedis(REDIS).catch(() => undefined);
  stopCluster({ name: 'demo', port: pgPort });
  process.exit(1);
});

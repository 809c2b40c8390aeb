/**
 * `npm start`: one command that brings up the whole product on 127.0.0.1 with demo data.
 * PostgreSQL (private cluster) → migrations + demo seed → web export (only when its sources
 * changed) → the processes in scripts/processes.ts (fake SMTP, MQTT broker, API serving the web
 * app, rig simulator). Ctrl-C stops every child and the database cleanly.
 *
 * --dev: the Expo dev server (hot reload) behind the API's origin instead of the static export.
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
import { startStack, type Stack } from './stack';
import { ensureWebExport, WEB_DIR } from './web-export';

const dev = process.argv.includes('--dev');
const pgPort = Number(process.env.EMBERLOT_PG_PORT ?? 54329);

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
  console.log(`[start] rig simulator: ${fleet.rigs} rigs, ${fleet.chambers} chambers, ${fleet.loaded} loaded sockets`);
  await ds.destroy();
  if (!dev) ensureWebExport();

  let stack: Stack | null = null;
  let stopping = false;
  const stopAll = async (code: number) => {
    if (stopping) return;
    stopping = true;
    console.log('\n[start] stopping…');
    await stack?.stop();
    stopCluster({ name: 'demo', port: pgPort });
    process.exit(code);
  };
  process.on('SIGINT', () => void stopAll(0));
  process.on('SIGTERM', () => void stopAll(0));

  stack = await startStack({
    dev,
    env: {
      ...baseEnv,
      EMBERLOT_WEB_DIR: dev ? '' : WEB_DIR,
      EMBERLOT_DEV_PROXY: dev ? 'http://127.0.0.1:8081' : '',
      EMBERLOT_SIM_CONFIG: fleetFile,
    },
    onUnexpectedExit: (name, code, sig) => {
      console.error(`[start] ${name} exited (${code ?? sig}); stopping everything`);
      void stopAll(1);
    },
  });

  const url = `http://127.0.0.1:${config.port}`;
  console.log(`
  Emberlot is running at ${url}   (ready in ${Math.round((Date.now() - t0) / 1000)} s; Ctrl-C stops everything)

  Secrets: ${describeSecrets(secrets)}

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
  stopCluster({ name: 'demo', port: pgPort });
  process.exit(1);
});

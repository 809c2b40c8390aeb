import 'reflect-metadata';
import * as http from 'node:http';
import { createApp } from './app';
import { configFromEnv } from './config';
import { createContext } from './composition';
import { createDataSource } from './db/data-source';
import { describeErrorForLog } from './db/safe-logger';
import { startWorkers } from './cluster/workers';
import { migrateUnderLock } from './cluster/leadership.data';
import { ConfigError, refuseWeakSecretsOffLoopback, withSecrets } from './secrets';
import { startMemoryLog } from './memory-log';

/** The API process: migrations, then HTTP (+ web export), MQTT ingest and the scheduler. */
async function main() {
  const config = configFromEnv(withSecrets(process.env).env);
  refuseWeakSecretsOffLoopback('the API', config.host, {
    sessionSecret: config.sessionSecret,
    mqttServerPassword: config.mqtt.password,
    dbPassword: config.db.password,
  });
  // Several API processes (EMBERLOT_WORKERS=elect) may start together: migrations under a lock.
  const elect = config.workers?.mode === 'elect';
  const ds = createDataSource(config.db, { runMigrations: !elect });
  await ds.initialize(); // runs pending migrations (single process)
  if (elect) await migrateUnderLock(ds);
  const ctx = createContext(ds, config);
  const stopFeatures = await startWorkers(ctx); // EMBERLOT_WORKERS=elect: only while elected leader
  const { app } = createApp(ctx);
  const server = http.createServer(app);
  await new Promise<void>((resolve) => server.listen(config.port, config.host, resolve));
  console.log(`[api] listening on http://${config.host}:${config.port}`);
  const stopMemoryLog = startMemoryLog(Number(process.env.EMBERLOT_MEMORY_LOG_MS ?? 0), () => ({
    protectionBacklog: ctx.services.protection?.backlog ?? 0,
    thermalBacklog: ctx.services.thermalTracker?.backlog ?? 0,
    ingestBuffered: ctx.services.telemetryIngest?.stats().buffered ?? 0,
  }));

  let closing = false;
  const shutdown = async (sig: string) => {
    if (closing) return;
    closing = true;
    console.log(`[api] ${sig}: closing`);
    stopMemoryLog();
    server.close();
    server.closeAllConnections?.();
    await stopFeatures().catch((e) => console.error(`[api] stopping features: ${describeErrorForLog(e)}`));
    await ctx.close().catch(() => undefined);
    await ds.destroy().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGINT', () => void shutdown('SIGINT'));
  process.on('SIGTERM', () => void shutdown('SIGTERM'));
}

main().catch((err) => {
  console.error(`[api] failed to start: ${err instanceof ConfigError ? err.message : describeErrorForLog(err)}`);
  process.exit(1);
});

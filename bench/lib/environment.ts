/**
 * The bench's own world: a private PostgreSQL cluster ("bench", durable settings, recreated on
 * every run so results do not depend on what an earlier run left), the migrated schema with the
 * demo users, device types, lots and plans, and the real processes (fake SMTP, MQTT broker, API
 * server with ingest, protection and scheduler) started through scripts/stack.ts on bench ports.
 */
import 'reflect-metadata';
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { Pool } from 'pg';
import type { DataSource } from 'typeorm';
import { configFromEnv } from '../../server/config';
import { createDataSource } from '../../server/db/data-source';
import { pgPool } from '../../server/db/pool';
import { SEED_STEPS } from '../../server/seed/seed';
import {
  destroyCluster,
  ensureDatabase,
  PROJECT_ROOT,
  startCluster,
  stopCluster,
  type ClusterInfo,
  type ClusterOptions,
} from '../../scripts/pg-cluster';
import { PROCESSES } from '../../scripts/processes';
import { startStack, type Stack } from '../../scripts/stack';
import { ensureWebExport, WEB_DIR } from '../../scripts/web-export';
import { MQTT_SERVER, SETTINGS } from './settings';

/** Stress hours per wall second of the protection scenario's simulated rigs (10 stress s / wall s). */
export const BENCH_CLOCK_RATE = 10 / 3600;

export interface BenchEnv {
  cluster: ClusterInfo;
  clusterOpts: ClusterOptions;
  ds: DataSource;
  pool: Pool;
  env: NodeJS.ProcessEnv;
  baseUrl: string;
  mqttUrl: string;
  stack: Stack | null;
  pids: Record<string, number>;
}

export const RESULTS_DIR = path.join(PROJECT_ROOT, 'bench', 'results');

/**
 * Durable settings on purpose (fast: false → fsync and synchronous_commit on, as the demo cluster):
 * a `stored` acknowledgement promises a rig its samples survive a crash, which only a durable
 * commit keeps; the COPY baseline runs on the same cluster with the same settings.
 */
export function clusterOptions(): ClusterOptions {
  return { name: SETTINGS.cluster, port: SETTINGS.ports.pg, fast: false, quiet: true };
}

/**
 * WAL segment files as a server that has run for a while has them. A fresh cluster creates each
 * 16 MB segment (zero-filled: new page-cache pages) as the WAL reaches it; a running server renames
 * the segments a checkpoint no longer needs and writes over them. Without this the ingest pass, the
 * first heavy writer, paid for every new segment and the COPY baseline, which runs after it, reused
 * them (bench/README.md: "A fresh cluster's first writer"). Each switch needs a record since the
 * last; the checkpoint then keeps the files for re-use (up to max_wal_size, 1 GB). Returns how many
 * segment files the cluster holds.
 */
async function preallocateWal(pool: Pool): Promise<number> {
  const client = await pool.connect();
  try {
    for (let i = 0; i < WAL_SEGMENTS_READY; i++)
      await client.query(`SELECT pg_logical_emit_message(false, 'emberlot-bench', 'wal'), pg_switch_wal()`);
    await client.query('CHECKPOINT');
    const { rows } = await client.query<{ n: number }>('SELECT count(*)::int AS n FROM pg_ls_waldir()');
    return rows[0].n;
  } finally {
    client.release();
  }
}

/** 64 × 16 MB = max_wal_size (1 GB): what checkpoints keep for re-use on a busy server. */
const WAL_SEGMENTS_READY = 64;

/** Only the parts of the demo seed the scenarios build on: people, device types and lots, plans. */
const BASE_SEED = ['users', 'device types and lots', 'stress plans'];

export async function prepareDatabase(log: (l: string) => void): Promise<BenchEnv> {
  const clusterOpts = clusterOptions();
  if (SETTINGS.scenarios.includes('web')) ensureWebExport(log);
  const t0 = Date.now();
  destroyCluster(clusterOpts);
  const cluster = startCluster(clusterOpts);
  await ensureDatabase(cluster, SETTINGS.database);
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    EMBERLOT_DB_HOST: '127.0.0.1',
    EMBERLOT_DB_PORT: String(SETTINGS.ports.pg),
    EMBERLOT_PG_PORT: String(SETTINGS.ports.pg),
    EMBERLOT_DB_NAME: SETTINGS.database,
    EMBERLOT_DB_PASSWORD: cluster.password,
    EMBERLOT_PORT: String(SETTINGS.ports.api),
    EMBERLOT_MQTT_PORT: String(SETTINGS.ports.mqtt),
    EMBERLOT_MQTT_URL: `mqtt://127.0.0.1:${SETTINGS.ports.mqtt}`,
    EMBERLOT_SMTP_PORT: String(SETTINGS.ports.smtp),
    EMBERLOT_MQTT_SERVER_USER: MQTT_SERVER.username,
    EMBERLOT_MQTT_SERVER_PASSWORD: MQTT_SERVER.password,
    EMBERLOT_CLOCK_RATE: String(BENCH_CLOCK_RATE),
    // The web scenario loads the app from the API, as `npm start` serves it.
    EMBERLOT_WEB_DIR: SETTINGS.scenarios.includes('web') ? WEB_DIR : '',
    EMBERLOT_DEV_PROXY: '',
    EMBERLOT_UPLOAD_DIR: path.join(PROJECT_ROOT, '.data', 'bench-uploads'),
    EMBERLOT_SESSION_SECRET: 'emberlot-bench-session-secret',
  };
  const ds = createDataSource(configFromEnv(env).db, { poolSize: 8 });
  await ds.initialize(); // migrations
  for (const step of SEED_STEPS.filter((s) => BASE_SEED.includes(s.name))) await step.run(ds);
  const pool = pgPool(ds);
  const walSegments = await preallocateWal(pool);
  log(
    `PostgreSQL "bench" on 127.0.0.1:${SETTINGS.ports.pg} (fresh cluster, durable settings, ${walSegments} WAL segment files ready), schema and base seed in ${((Date.now() - t0) / 1000).toFixed(1)} s`,
  );
  return {
    cluster,
    clusterOpts,
    ds,
    pool,
    env,
    baseUrl: `http://127.0.0.1:${SETTINGS.ports.api}`,
    mqttUrl: `mqtt://127.0.0.1:${SETTINGS.ports.mqtt}`,
    stack: null,
    pids: {},
  };
}

export async function startProcesses(b: BenchEnv, log: (l: string) => void): Promise<void> {
  const t0 = Date.now();
  const env = { ...b.env };
  // --cpu-prof (and other V8 flags) are refused in NODE_OPTIONS: add them to this run's copy of the
  // API and broker command lines (node writes a CPU profile when the process exits, at teardown).
  const flags: string[] = [];
  if (SETTINGS.cpuProfile) {
    const dir = path.join(PROJECT_ROOT, '.data', 'bench-prof');
    fs.mkdirSync(dir, { recursive: true });
    flags.push('--cpu-prof', `--cpu-prof-dir=${dir}`);
  }
  if (process.env.EMBERLOT_BENCH_NODE_FLAGS) flags.push(...process.env.EMBERLOT_BENCH_NODE_FLAGS.split(' ').filter(Boolean));
  for (const spec of PROCESSES) {
    if ((spec.name === 'api' || spec.name === 'broker') && flags.length && !spec.command.includes(flags[0]))
      spec.command.splice(1, 0, ...flags);
  }
  b.stack = await startStack({
    env,
    // The bench drives its own rigs (lightweight publishers and the simulator in this process).
    skip: ['rigs'],
    echo: SETTINGS.verbose,
    onUnexpectedExit: (name, code, sig) => {
      console.error(`[bench] ${name} exited unexpectedly (${code ?? sig})`);
    },
  });
  for (const { spec, child } of b.stack.children) if (child.pid) b.pids[spec.name] = child.pid;
  log(
    `processes up in ${((Date.now() - t0) / 1000).toFixed(1)} s: ${Object.entries(b.pids)
      .map(([n, p]) => `${n} (pid ${p})`)
      .join(', ')}`,
  );
}

export async function teardown(b: BenchEnv | null): Promise<void> {
  if (!b) return;
  await b.stack?.stop(8000).catch(() => undefined);
  // A query still running must not hold the bench: the cluster's fast shutdown ends it anyway.
  await Promise.race([b.ds.destroy().catch(() => undefined), new Promise((r) => setTimeout(r, 5000))]);
  // The next run starts from a fresh cluster anyway: keep the data only when asked to (inspection).
  if (process.env.EMBERLOT_BENCH_KEEP === '1') stopCluster(b.clusterOpts);
  else destroyCluster(b.clusterOpts);
}

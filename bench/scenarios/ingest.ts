/**
 * Ingest: `rigs` × `sockets` lightweight publishers (registered rigs with their own MQTT secrets,
 * authenticated by the real broker against PostgreSQL) publish into the real API process as fast
 * as the `stored` window lets them, for a fixed time. Then:
 *   samplesPerSec           socket samples committed per second in the window (the sockets of the
 *                           messages whose stored_at falls in [start + warm-up, end of publishing))
 *   copyBaselineRowsPerSec  the same samples (COPY … TO STDOUT, one row each) loaded with one raw
 *                           COPY into a row-per-sample table with its key (the layout before
 *                           migration 1828…: ROW_PER_SAMPLE_COLUMNS) on the
 *                           same cluster, right after; three loads, the median counts
 *                           (baselineRunsRowsPerSec lists all three)
 *   p99LatencyMs            percentile_cont(0.99) of stored_at − ts over the window's messages.
 *                           stored_at is DEFAULT now(): the START of the ingest transaction that
 *                           inserted the row, not its commit; ackP99LatencyMs (first publish → the
 *                           rig holding the `stored` confirmation, sent after COMMIT) bounds it above.
 *   published / stored / lost  distinct seqs published vs rows in telemetry_batches after the
 *                           publishers drained their outboxes (re-sending what was not confirmed)
 *   peakRssMb               largest VmRSS of the API and broker processes during the pass.
 * Every socket of the headline pass reports bias on (a working floor: live protection assesses
 * every sample). A shorter second pass (`unbiasedSockets`, other rigs) reports bias off, so
 * protection skips its per-sample assessment: the difference is what that assessment costs.
 * Both passes record the CPU each process used in the counted window (cpuCoresInWindow) and how
 * busy the whole machine was (machineBusyCoresInWindow; the machine may be shared).
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { pipeline } from 'node:stream/promises';
import bcrypt from 'bcryptjs';
import { from as copyFrom, to as copyTo } from 'pg-copy-streams';
import { DEMO_USERS } from '../../server/seed/demo-data';
import { clusterPid } from '../../scripts/pg-cluster';
import { coresBetween, cpuSnapshot, machineCoresBetween, machineTicks, type CpuSnapshot } from '../lib/cpu';
import type { BenchEnv } from '../lib/environment';
import { getJson, percentile, round, signIn } from '../lib/http';
import type { RssSampler } from '../lib/rss';
import { SETTINGS } from '../lib/settings';
import { LightRig } from './light-rig';

export interface IngestResult {
  samplesPerSec: number;
  copyBaselineRowsPerSec: number;
  ratio: number;
  p99LatencyMs: number;
  published: number;
  stored: number;
  lost: number;
  peakRssMb: number;
  [extra: string]: unknown;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const pad = (n: number) => String(n).padStart(2, '0');

export async function registerIngestRigs(
  b: BenchEnv,
  prefix: string,
  n: number,
  sockets: number,
): Promise<Array<{ id: string; code: string; username: string; password: string }>> {
  const out: Array<{ id: string; code: string; username: string; password: string }> = [];
  for (let k = 1; k <= n; k++) {
    const code = `${prefix}-${pad(k)}`;
    const username = `rig-${code.toLowerCase()}`;
    const password = `bench-${code.toLowerCase()}-secret`;
    // Cost 8 (the product uses 10): each broker connect checks it once; the cost is in the hash.
    const hash = await bcrypt.hash(password, 8);
    const [row] = await b.ds.query(
      `INSERT INTO rigs (code, name, location, socket_count, max_temp_c, max_voltage_v, mqtt_username, mqtt_secret_hash, credentials_issued_at)
       VALUES ($1, $2, 'Bench bay', $3, 200, 100, $4, $5, now()) RETURNING id`,
      [code, `Bench rig ${code}`, sockets, username, hash],
    );
    out.push({ id: row.id, code, username, password });
  }
  return out;
}

interface PassOptions {
  prefix: string;
  seconds: number;
  warmupS: number;
  biasOn: boolean;
  seedBase: number;
}

/** One ingest pass: register rigs, publish for `seconds`, drain, then read what the database holds. */
async function ingestPass(b: BenchEnv, rss: RssSampler, log: (l: string) => void, o: PassOptions) {
  const s = SETTINGS.ingest;
  const rigRows = await registerIngestRigs(b, o.prefix, s.rigs, s.sockets);
  const rigIds = rigRows.map((r) => r.id);
  const adminUser = DEMO_USERS.find((u) => u.role === 'admin')!;
  const admin = await signIn(b.baseUrl, adminUser.email, adminUser.password).catch(() => null);

  const rigs = rigRows.map(
    (r, k) =>
      new LightRig({
        rigCode: r.code,
        username: r.username,
        password: r.password,
        brokerUrl: b.mqttUrl,
        sockets: s.sockets,
        window: s.window,
        resendMs: s.resendMs,
        seed: o.seedBase + k,
        biasOn: o.biasOn,
      }),
  );
  await Promise.all(rigs.map((r) => r.connect()));
  await sleep(500); // status messages land; the server marks the rigs online

  const rssBefore = rss.currentMb();
  rss.mark();
  const startMs = Date.now();
  const windowFrom = new Date(startMs + o.warmupS * 1000);
  const windowTo = new Date(startMs + o.seconds * 1000);
  for (const r of rigs) {
    r.latencyFrom = windowFrom.getTime();
    r.latencyTo = windowTo.getTime();
    r.startProducing();
  }
  // Watch the server's own view while it runs (admin: GET /api/telemetry/stats).
  let maxBuffered = 0;
  let statsSlowestMs = 0;
  let statsPolls = 0;
  const watch = setInterval(() => {
    if (!admin) return;
    getJson<{ live: { buffered: number } | null }>(`${b.baseUrl}/api/telemetry/stats`, admin)
      .then(({ ms, body }) => {
        statsPolls++;
        maxBuffered = Math.max(maxBuffered, body.live?.buffered ?? 0);
        statsSlowestMs = Math.max(statsSlowestMs, ms);
      })
      .catch(() => undefined);
  }, 2000);
  // CPU per process over the counted window (the API, the broker, this process = the publishers, PostgreSQL).
  const cpuPids = { api: b.pids.api, broker: b.pids.broker, publishers: process.pid };
  const postmaster = clusterPid(b.clusterOpts);
  let cpuA: CpuSnapshot | null = null;
  let machA: ReturnType<typeof machineTicks> | null = null;
  let lastLog = Date.now();
  while (Date.now() < windowTo.getTime()) {
    await sleep(250);
    if (!cpuA && Date.now() >= windowFrom.getTime()) {
      cpuA = cpuSnapshot(cpuPids, postmaster);
      machA = machineTicks();
    }
    if (Date.now() - lastLog >= 10_000) {
      lastLog = Date.now();
      const confirmed = rigs.reduce((n, r) => n + r.stats.confirmed, 0);
      log(
        `  ingest ${o.prefix}: ${Math.round((Date.now() - startMs) / 1000)} s, ${confirmed} messages confirmed (${Math.round((confirmed * s.sockets) / ((Date.now() - startMs) / 1000))} samples/s so far)`,
      );
    }
  }
  const cpuB = cpuSnapshot(cpuPids, postmaster);
  const machB = machineTicks();
  for (const r of rigs) r.stopProducing();
  const publishingS = (Date.now() - startMs) / 1000;

  // Drain: every publisher waits for its outbox to empty (re-sending what stays unconfirmed).
  const drainDeadline = Date.now() + s.drainS * 1000;
  while (rigs.some((r) => r.unconfirmed > 0) && Date.now() < drainDeadline) await sleep(100);
  const drainS = (Date.now() - startMs) / 1000 - publishingS;
  clearInterval(watch);
  const peaks = rss.peaksMb();
  const unconfirmedLeft = rigs.reduce((n, r) => n + r.unconfirmed, 0);
  const published = rigs.reduce((n, r) => n + r.lastSeq, 0);
  const resent = rigs.reduce((n, r) => n + r.stats.resent, 0);
  const ackLatencies = rigs.flatMap((r) => r.ackLatencies);
  await Promise.all(rigs.map((r) => r.close()));
  await sleep(300);

  const q = async <T>(sql: string, params: unknown[]): Promise<T> => (await b.pool.query(sql, params)).rows[0] as T;
  const { stored } = await q<{ stored: string }>('SELECT count(*) AS stored FROM telemetry_batches WHERE rig_id = ANY($1::uuid[])', [
    rigIds,
  ]);
  const { rows: sampleRows } = await q<{ rows: string }>(
    'SELECT coalesce(sum(cardinality(socket)), 0) AS rows FROM telemetry_batches WHERE rig_id = ANY($1::uuid[])',
    [rigIds],
  );
  const win = await q<{ samples: string; messages: string }>(
    `SELECT coalesce(sum(cardinality(b.socket)), 0) AS samples, count(*) AS messages
       FROM telemetry_batches b
      WHERE b.rig_id = ANY($1::uuid[]) AND b.stored_at >= $2 AND b.stored_at < $3`,
    [rigIds, windowFrom, windowTo],
  );
  const lat = await q<{ p50: number; p95: number; p99: number; max: number }>(
    `SELECT percentile_cont(0.5) WITHIN GROUP (ORDER BY ms) AS p50, percentile_cont(0.95) WITHIN GROUP (ORDER BY ms) AS p95,
            percentile_cont(0.99) WITHIN GROUP (ORDER BY ms) AS p99, max(ms) AS max
       FROM (SELECT extract(epoch FROM (stored_at - ts)) * 1000 AS ms FROM telemetry_batches
              WHERE rig_id = ANY($1::uuid[]) AND ts >= $2 AND ts < $3) x`,
    [rigIds, windowFrom, windowTo],
  );
  const windowS = (windowTo.getTime() - windowFrom.getTime()) / 1000;
  return {
    rigIds,
    windowFrom,
    windowTo,
    windowSamples: Number(win.samples),
    samplesPerSec: Number(win.samples) / windowS,
    metrics: {
      p99LatencyMs: round(Number(lat.p99), 1),
      published,
      stored: Number(stored),
      lost: published - Number(stored),
      peakRssMb: Math.max(peaks.api ?? 0, peaks.broker ?? 0),
      measuredSeconds: windowS,
      warmupSeconds: o.warmupS,
      windowSamples: Number(win.samples),
      windowMessages: Number(win.messages),
      messagesPerSec: Math.round(Number(win.messages) / windowS),
      storedSamples: Number(sampleRows),
      p50LatencyMs: round(Number(lat.p50), 1),
      p95LatencyMs: round(Number(lat.p95), 1),
      maxLatencyMs: round(Number(lat.max), 1),
      ackP50LatencyMs: round(percentile(ackLatencies, 50), 1),
      ackP99LatencyMs: round(percentile(ackLatencies, 99), 1),
      resent,
      unconfirmedAtEnd: unconfirmedLeft,
      drainSeconds: round(drainS, 1),
      peakRssMbByProcess: peaks,
      rssMbBefore: rssBefore,
      serverMaxBuffered: maxBuffered,
      statsPollSlowestMs: round(statsSlowestMs, 1),
      statsPolls,
      cpuCoresInWindow: cpuA ? coresBetween(cpuA, cpuB) : null,
      machineBusyCoresInWindow: machA ? machineCoresBetween(machA, machB) : null,
    },
  };
}

export async function runIngest(b: BenchEnv, rss: RssSampler, log: (l: string) => void): Promise<IngestResult> {
  const s = SETTINGS.ingest;
  // The headline pass: every socket energised, as on a working floor (live protection judges each sample).
  const main = await ingestPass(b, rss, log, { prefix: 'BI', seconds: s.seconds, warmupS: s.warmupS, biasOn: true, seedBase: 1000 });
  const counters = await b.pool.query(`SELECT name, value FROM system_counters WHERE name LIKE 'ingest_%' ORDER BY name`);
  // COPY baseline: exactly the window's rows, out to a file, then one raw COPY into an identical table.
  const baseline = await copyBaseline(b, main.rigIds, main.windowFrom, main.windowTo, main.windowSamples);
  const { p99LatencyMs, published, stored, lost, peakRssMb, ...details } = main.metrics;
  const result: IngestResult = {
    samplesPerSec: Math.round(main.samplesPerSec),
    copyBaselineRowsPerSec: Math.round(baseline.rowsPerSec),
    ratio: round(main.samplesPerSec / baseline.rowsPerSec, 3),
    p99LatencyMs,
    published,
    stored,
    lost,
    peakRssMb,
    rigs: s.rigs,
    socketsPerRig: s.sockets,
    window: s.window,
    ...details,
    latencyNote: 'stored_at = transaction start (DEFAULT now()); ackP99LatencyMs includes COMMIT and the stored confirmation',
    baselineRows: baseline.rows,
    baselineSeconds: round(baseline.seconds, 2),
    baselineRunsRowsPerSec: baseline.runsRowsPerSec,
    baselinePostgresMicrosPerRow: baseline.postgresMicrosPerRow,
    postgresMicrosPerSample: details.cpuCoresInWindow ? round((details.cpuCoresInWindow.postgres * 1e6) / main.samplesPerSec, 2) : null,
    baselineMachineBusyCores: baseline.machineBusyCores,
    counters: Object.fromEntries(counters.rows.map((r: { name: string; value: string }) => [r.name, Number(r.value)])),
  };
  if (s.unbiasedSeconds > 0) {
    // Diagnosis pass, same pipeline: sockets report bias off, so live protection skips its
    // per-sample assessment. The difference to the headline is what that assessment costs.
    const idle = await ingestPass(b, rss, log, { prefix: 'BN', seconds: s.unbiasedSeconds, warmupS: 3, biasOn: false, seedBase: 3000 });
    result.unbiasedSockets = {
      samplesPerSec: Math.round(idle.samplesPerSec),
      ratio: round(idle.samplesPerSec / baseline.rowsPerSec, 3),
      p99LatencyMs: idle.metrics.p99LatencyMs,
      lost: idle.metrics.lost,
      peakRssMb: idle.metrics.peakRssMb,
      messagesPerSec: idle.metrics.messagesPerSec,
      ackP99LatencyMs: idle.metrics.ackP99LatencyMs,
      cpuCoresInWindow: idle.metrics.cpuCoresInWindow,
      machineBusyCoresInWindow: idle.metrics.machineBusyCoresInWindow,
      measuredSeconds: idle.metrics.measuredSeconds,
    };
  }
  return result;
}

/**
 * The baseline's table: one row per socket sample with its primary key, as telemetry_samples was
 * stored until migration 1828… (kept as the yardstick so the ratio compares across rounds).
 */
export const ROW_PER_SAMPLE_COLUMNS = `(rig_id uuid NOT NULL, seq bigint NOT NULL, socket smallint NOT NULL, case_c real NOT NULL,
  v_v real NOT NULL, i_a double precision NOT NULL, bias_on boolean NOT NULL, tripped boolean NOT NULL DEFAULT false,
  PRIMARY KEY (rig_id, seq, socket))`;

interface CopyBaseline {
  rowsPerSec: number;
  seconds: number;
  rows: number;
  runsRowsPerSec: number[];
  /** PostgreSQL's CPU (every process of the cluster) per row in the median load, µs. */
  postgresMicrosPerRow: number;
  /** Busy cores of the whole machine during the median load. */
  machineBusyCores: number;
}

async function copyBaseline(b: BenchEnv, rigIds: string[], from: Date, to: Date, expected: number): Promise<CopyBaseline> {
  const file = path.join(os.tmpdir(), `emberlot-bench-copy-${process.pid}.tsv`);
  const client = await b.pool.connect();
  try {
    const rigList = rigIds.map((id) => `'${id.replace(/[^0-9a-f-]/gi, '')}'`).join(',');
    const fromIso = from.toISOString();
    const toIso = to.toISOString();
    await pipeline(
      client.query(
        copyTo(
          `COPY (SELECT b.rig_id, b.seq, s.socket, s.case_c, s.v_v, s.i_a, (s.flags & 1) <> 0, (s.flags & 2) <> 0
                 FROM telemetry_batches b CROSS JOIN LATERAL unnest(b.socket, b.case_c, b.v_v, b.i_a, b.flags) AS s(socket, case_c, v_v, i_a, flags)
                 WHERE b.rig_id IN (${rigList}) AND b.stored_at >= '${fromIso}' AND b.stored_at < '${toIso}') TO STDOUT`,
        ),
      ),
      fs.createWriteStream(file),
    );
    // Three loads, each into a fresh identical table; the median counts (one COPY's speed swings by
    // ±30 % from one minute to the next on a shared 2-core machine). Each starts after a CHECKPOINT,
    // so no load pays for the ingest's dirty pages (this can only favour the baseline). The tables
    // are dropped only after the third load: each load's files then grow into memory the page cache
    // has not held before, as telemetry_samples' files did during the pass. Dropping the previous
    // table first handed the next load ~0.6 GB of just-freed page cache, which on this VM costs a
    // tenth of never-used memory to write into (bench/README.md: "A fresh cluster's first writer").
    const runs: number[] = [];
    const pgMicros: number[] = [];
    const busy: number[] = [];
    const postmaster = clusterPid(b.clusterOpts);
    const table = (k: number) => `bench_copy_baseline_${k + 1}`;
    let n = 0;
    for (let k = 0; k < 3; k++) {
      await client.query(`DROP TABLE IF EXISTS ${table(k)}`);
      await client.query(`CREATE TABLE ${table(k)} ${ROW_PER_SAMPLE_COLUMNS}`);
      await client.query('CHECKPOINT');
      const cpuA = cpuSnapshot({}, postmaster);
      const machA = machineTicks();
      const t0 = process.hrtime.bigint();
      await pipeline(fs.createReadStream(file, { highWaterMark: 1 << 20 }), client.query(copyFrom(`COPY ${table(k)} FROM STDIN`)));
      const s = Number(process.hrtime.bigint() - t0) / 1e9;
      const cores = coresBetween(cpuA, cpuSnapshot({}, postmaster));
      busy.push(machineCoresBetween(machA, machineTicks()));
      pgMicros.push((cores.postgres * s * 1e6) / expected);
      const { rows } = await client.query(`SELECT count(*) AS n FROM ${table(k)}`);
      n = Number(rows[0].n);
      if (n !== expected) throw new Error(`COPY baseline loaded ${n} rows, expected ${expected}`);
      runs.push(s);
    }
    for (let k = 0; k < 3; k++) await client.query(`DROP TABLE ${table(k)}`);
    const median = runs.indexOf([...runs].sort((a, b) => a - b)[1]);
    const seconds = runs[median];
    return {
      rowsPerSec: n / seconds,
      seconds,
      rows: n,
      runsRowsPerSec: runs.map((x) => Math.round(n / x)),
      postgresMicrosPerRow: round(pgMicros[median], 2),
      machineBusyCores: busy[median],
    };
  } finally {
    client.release();
    fs.rmSync(file, { force: true });
  }
}

/**
 * `npm run bench`: Emberlot's performance benchmark (not a test; never part of `npm test`).
 * Starts its own PostgreSQL cluster ("bench", separate from the demo data), the broker and the API
 * server, runs the scenarios (ingest, protection, analytics, api), writes bench/results/latest.json
 * and prints the same object as the LAST line of its output (one line of JSON).
 * See bench/README.md for what each number means. Knobs: bench/lib/settings.ts.
 */
import 'reflect-metadata';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { stopCluster } from '../scripts/pg-cluster';
import { prepareDatabase, RESULTS_DIR, startProcesses, teardown, type BenchEnv } from './lib/environment';
import { closeAgent } from './lib/http';
import { RssSampler } from './lib/rss';
import { SETTINGS } from './lib/settings';
import { runAnalytics } from './scenarios/analytics';
import { runApi } from './scenarios/api';
import { runFailoverBroker } from './scenarios/failover-broker';
import { runIngest } from './scenarios/ingest';
import { runProtection } from './scenarios/protection';
import { runProtectionAtRating } from './scenarios/protection-at-rating';
import { runStorage } from './scenarios/storage';
import { runWeb } from './scenarios/web';
import { runFailoverLeader } from './scenarios/failover-leader';
import { failoverSummary, type Part } from './scenarios/failover';

/** Hard stop for the whole run (every loop inside is bounded too). */
const OVERALL_LIMIT_MS = Number(process.env.EMBERLOT_BENCH_LIMIT_S ?? 480) * 1000;

const log = (line: string) => console.log(`[bench] ${line}`);

async function main(): Promise<number> {
  const t0 = Date.now();
  const loadAtStart = os.loadavg().map((x) => Math.round(x * 100) / 100);
  const result: Record<string, unknown> = {};
  let env: BenchEnv | null = null;
  let rss: RssSampler | null = null;
  const killer = setTimeout(() => {
    console.error(`[bench] over the ${OVERALL_LIMIT_MS / 1000} s limit: stopping`);
    // Do not wait for the bench's own queries: stop the children, then the cluster (fast shutdown
    // ends every backend), then leave.
    const hard: { unref?: () => void } = setTimeout(() => process.exit(2), 15_000) as never;
    hard.unref?.();
    void (async () => {
      await env?.stack?.stop(3000).catch(() => undefined);
      if (env) stopCluster(env.clusterOpts);
      process.exit(2);
    })();
  }, OVERALL_LIMIT_MS) as unknown as ReturnType<typeof setTimeout> & { unref?: () => void };
  killer.unref?.();
  let failed = false;
  try {
    log(`scenarios: ${SETTINGS.scenarios.join(', ')}; ${os.cpus().length} CPUs, Node ${process.version}`);
    env = await prepareDatabase(log);
    await startProcesses(env, log);
    rss = new RssSampler({ api: env.pids.api, broker: env.pids.broker });
    rss.start();
    const scenarios: Array<[string, () => Promise<unknown>]> = [
      ['ingest', () => runIngest(env!, rss!, log)],
      ['protection', async () => ({ ...(await runProtection(env!, log)), atRating: runProtectionAtRating(log) })],
      ['analytics', () => runAnalytics(env!, log)],
      ['storage', () => runStorage(env!, log)],
      ['api', () => runApi(env!, log)],
      ['web', () => runWeb(env!, log)],
      ['failoverBroker', () => runFailoverBroker(env!, log)],
      ['failoverLeader', () => runFailoverLeader(env!, log)],
      // Both kills in one result; a part already run above is reused, never run twice.
      [
        'failover',
        async () =>
          failoverSummary(
            await partOf('failoverBroker', () => runFailoverBroker(env!, log)),
            await partOf('failoverLeader', () => runFailoverLeader(env!, log)),
          ),
      ],
    ];
    async function partOf<T>(name: 'failoverBroker' | 'failoverLeader', run: () => Promise<T>): Promise<Part<T>> {
      if (name in result) return result[name] as Part<T>;
      try {
        return await run();
      } catch (err) {
        failed = true;
        console.error(`[bench] failover (${name}) failed: ${err instanceof Error ? err.stack : err}`);
        return { error: err instanceof Error ? err.message : String(err) };
      }
    }
    for (const [name, run] of scenarios) {
      if (!SETTINGS.scenarios.includes(name as (typeof SETTINGS.scenarios)[number])) continue;
      const ts = Date.now();
      log(`${name}: starting`);
      try {
        result[name] = await run();
      } catch (err) {
        failed = true;
        const message = err instanceof Error ? err.message : String(err);
        console.error(`[bench] ${name} failed: ${err instanceof Error ? err.stack : err}`);
        result[name] = { error: message };
      }
      log(`${name}: done in ${((Date.now() - ts) / 1000).toFixed(1)} s → ${JSON.stringify(result[name])}`);
    }
    result.peakRssMbOverall = rss.peaksMb();
  } finally {
    rss?.stop();
    closeAgent();
    await teardown(env);
    clearTimeout(killer);
  }
  result.meta = {
    at: new Date().toISOString(),
    seconds: Math.round((Date.now() - t0) / 1000),
    cpus: os.cpus().length,
    node: process.version,
    // The machine may be shared: its load before and after the run says how much.
    loadAverageAtStart: loadAtStart,
    loadAverageAtEnd: os.loadavg().map((x) => Math.round(x * 100) / 100),
    postgres: {
      port: SETTINGS.ports.pg,
      durable: true,
      note: 'fsync and synchronous_commit on; both ingest and COPY baseline on this cluster',
    },
  };
  fs.mkdirSync(RESULTS_DIR, { recursive: true });
  const line = JSON.stringify(result);
  fs.writeFileSync(path.join(RESULTS_DIR, 'latest.json'), line + '\n');
  console.log(line);
  return failed ? 1 : 0;
}

main().then(
  (code) => process.exit(code),
  (err) => {
    console.error('[bench] failed:', err instanceof Error ? err.stack : err);
    process.exit(1);
  },
);

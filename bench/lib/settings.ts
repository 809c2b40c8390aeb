/**
 * Bench settings, all from the environment with defaults for the full run (`npm run bench`).
 * Shorter values are for development on a shared machine, e.g.
 *   EMBERLOT_BENCH_SCENARIOS=ingest EMBERLOT_BENCH_INGEST_S=12 npm run bench
 * Every port is on 127.0.0.1 and differs from the demo (4780/18830/2526/54329), test and e2e ones.
 */
const num = (name: string, d: number): number => {
  const v = process.env[name];
  if (v === undefined || v === '') return d;
  const n = Number(v);
  if (!Number.isFinite(n) || n < 0) throw new Error(`${name} must be a non-negative number (got "${v}")`);
  return n;
};

export const SCENARIOS = [
  'ingest',
  'protection',
  'analytics',
  'storage',
  'api',
  'web',
  'failoverBroker',
  'failoverLeader',
  'failover',
] as const;
export type ScenarioName = (typeof SCENARIOS)[number];

function scenarioList(): ScenarioName[] {
  const raw = process.env.EMBERLOT_BENCH_SCENARIOS;
  if (!raw) return [...SCENARIOS];
  const list = raw
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
  for (const s of list)
    if (!SCENARIOS.includes(s as ScenarioName))
      throw new Error(`EMBERLOT_BENCH_SCENARIOS: unknown scenario "${s}" (known: ${SCENARIOS.join(', ')})`);
  return list as ScenarioName[];
}

export const SETTINGS = {
  scenarios: scenarioList(),
  ports: {
    pg: num('EMBERLOT_BENCH_PG_PORT', 54371),
    api: num('EMBERLOT_BENCH_API_PORT', 4771),
    mqtt: num('EMBERLOT_BENCH_MQTT_PORT', 18871),
    smtp: num('EMBERLOT_BENCH_SMTP_PORT', 2571),
  },
  /** The private cluster's name (its data folder); a second bench at once needs its own, and its own ports. */
  cluster: process.env.EMBERLOT_BENCH_CLUSTER || 'bench',
  database: 'emberlot_bench',
  ingest: {
    rigs: num('EMBERLOT_BENCH_RIGS', 40),
    sockets: num('EMBERLOT_BENCH_SOCKETS', 64),
    /** Wall seconds of publishing (the first `warmupS` are not counted in samplesPerSec). */
    seconds: num('EMBERLOT_BENCH_INGEST_S', 40),
    warmupS: num('EMBERLOT_BENCH_WARMUP_S', 5),
    /** Unconfirmed messages a publisher may have out at once (its `stored` window). */
    // 20 × 40 rigs = 800 messages (~0.5 s at capacity) in flight: enough that the API parses the
    // next batches while PostgreSQL commits the last ones. With 10 the closed loop, not the pipeline,
    // set the pace (the API idled ~40 % of the window). Real rigs have no window at all.
    window: num('EMBERLOT_BENCH_WINDOW', 20),
    /** Re-send a message unconfirmed for this long (as the simulator's resendAfterWallS). */
    resendMs: num('EMBERLOT_BENCH_RESEND_MS', 5000),
    drainS: num('EMBERLOT_BENCH_DRAIN_S', 30),
    /** Seconds of a second pass whose sockets report bias off (live protection skips them); 0 = skip it. */
    unbiasedSeconds: num('EMBERLOT_BENCH_UNBIASED_S', 20),
  },
  protection: {
    /** Wall seconds the simulated rigs run (10 stress seconds per wall second). */
    seconds: num('EMBERLOT_BENCH_PROTECTION_S', 70),
  },
  analytics: {
    lots: num('EMBERLOT_BENCH_LOTS', 100),
    devicesPerLot: num('EMBERLOT_BENCH_DEVICES_PER_LOT', 77),
    /** Messages of the history rig (64 sockets each, one every 5 s): 16,000 → 1.02 M samples, 22 h. */
    historyMessages: num('EMBERLOT_BENCH_HISTORY_MESSAGES', 16_000),
    requests: num('EMBERLOT_BENCH_QUERY_REQUESTS', 40),
    /** Seconds per timed path; slow paths stop early (after at least 10 requests). */
    budgetS: num('EMBERLOT_BENCH_QUERY_BUDGET_S', 30),
  },
  api: {
    seconds: num('EMBERLOT_BENCH_API_S', 10),
    connections: num('EMBERLOT_BENCH_API_CONNECTIONS', 20),
  },
  /** 1 = write a V8 CPU profile of the API and broker processes into bench/results/prof/. */
  cpuProfile: process.env.EMBERLOT_BENCH_CPU_PROF === '1',
  /** 1 = echo the child processes' output. */
  verbose: process.env.EMBERLOT_BENCH_VERBOSE === '1',
} as const;

export const MQTT_SERVER = { username: 'emberlot-server', password: 'bench-server-local-only' };

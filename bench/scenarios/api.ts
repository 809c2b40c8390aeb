/**
 * API: autocannon (programmatic) against GET /api/floor and GET /api/health, both with a signed-in
 * session cookie (so both pay for the session lookup and the user load), one after the other with
 * the same connections and duration. The floor is every rig the other scenarios registered (tiles
 * read from the newest telemetry of each, with their runs and alarms) on the same, full database.
 * floorRps / healthRps = how much of the server's plain request capacity the floor keeps.
 */
import { DEMO_USERS } from '../../server/seed/demo-data';
import type { BenchEnv } from '../lib/environment';
import { getJson, round, signIn } from '../lib/http';
import { SETTINGS } from '../lib/settings';

// autocannon ships no types.
// eslint-disable-next-line @typescript-eslint/no-require-imports -- no types to import
const autocannon = require('autocannon') as (opts: Record<string, unknown>) => Promise<AutocannonResult>;

interface AutocannonResult {
  requests: { average: number; total: number };
  latency: { p50: number; p99: number; average: number };
  non2xx: number;
  errors: number;
  timeouts: number;
  '2xx': number;
}

export interface ApiResult {
  floorRps: number;
  healthRps: number;
  ratio: number;
  [extra: string]: unknown;
}

async function cannon(url: string, cookie: string) {
  const r = await autocannon({
    url,
    connections: SETTINGS.api.connections,
    duration: SETTINGS.api.seconds,
    headers: { cookie, accept: 'application/json' },
    timeout: 10,
  });
  if (r.non2xx > 0 || r.errors > 0) throw new Error(`${url}: ${r.non2xx} non-2xx answers, ${r.errors} errors`);
  return r;
}

export async function runApi(b: BenchEnv, log: (l: string) => void): Promise<ApiResult> {
  const op = DEMO_USERS.find((u) => u.role === 'operator')!;
  const cookie = await signIn(b.baseUrl, op.email, op.password);
  const { body } = await getJson<{ items: unknown[] }>(`${b.baseUrl}/api/floor`, cookie);
  // Warm both routes (JIT, plans, connection pool) before measuring.
  for (let k = 0; k < 5; k++) {
    await getJson(`${b.baseUrl}/api/floor`, cookie);
    await getJson(`${b.baseUrl}/api/health`, cookie);
  }
  const floor = await cannon(`${b.baseUrl}/api/floor`, cookie);
  log(`  floor: ${round(floor.requests.average)} req/s, p99 ${floor.latency.p99} ms (${body.items.length} rigs)`);
  const health = await cannon(`${b.baseUrl}/api/health`, cookie);
  log(`  health: ${round(health.requests.average)} req/s, p99 ${health.latency.p99} ms`);
  return {
    floorRps: round(floor.requests.average),
    healthRps: round(health.requests.average),
    ratio: round(floor.requests.average / health.requests.average, 3),
    floorRigs: body.items.length,
    floorP99Ms: floor.latency.p99,
    healthP99Ms: health.latency.p99,
    connections: SETTINGS.api.connections,
    secondsEach: SETTINGS.api.seconds,
    signedInAs: 'operator',
  };
}

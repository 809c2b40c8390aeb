/**
 * Real Emberlot processes for the fault tests: the broker (broker/main.ts) and the API server
 * (server/main.ts), each spawned with `node -r @swc-node/register` exactly as `npm start` does
 * (scripts/processes.ts), on loopback ephemeral ports, against a test database. A process can be
 * killed with any signal (SIGKILL: no shutdown code runs) and started again with the same
 * environment. Every child this module starts is remembered and killed by `stopAllProcesses()`
 * (and, as a last resort, when the test process exits) — by its own pid, never by name.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import * as net from 'node:net';
import * as path from 'node:path';
import type { DbConfig } from '../../server/config';

export const PROJECT_ROOT = path.resolve(__dirname, '..', '..');

/** Environment variables added to a child's (process.env is inherited). */
export type Env = Record<string, string | undefined>;

/** A free loopback TCP port (bind to 0, read it, close). */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(port));
    });
  });
}

const live = new Set<ChildProcess>();
let exitHookInstalled = false;
function installExitHook(): void {
  if (exitHookInstalled) return;
  exitHookInstalled = true;
  process.once('exit', () => {
    for (const c of live) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
  });
}

export interface NodeProcess {
  readonly name: string;
  readonly pid: number | undefined;
  readonly running: boolean;
  /** The last ~64 KB of stdout + stderr (diagnostics in failure messages). */
  output(): string;
  /** Lines matching `re` so far (e.g. log lines a test counts). */
  lines(re: RegExp): string[];
  /** Resolve when a line matching `re` appears after `fromOffset` (default: from the start). */
  waitForLine(re: RegExp, timeoutMs: number, fromOffset?: number): Promise<void>;
  /** Characters of output so far: pass to waitForLine to wait for a *new* line. */
  offset(): number;
  kill(signal: NodeJS.Signals): Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
}

/** Spawn `node -r @swc-node/register <file>` in the project root with `env` added. */
export function spawnTs(name: string, file: string, env: Env, echo = process.env.EMBERLOT_FAULTS_ECHO === '1'): NodeProcess {
  installExitHook();
  const child = spawn(process.execPath, ['-r', '@swc-node/register', file], {
    cwd: PROJECT_ROOT,
    env: { ...process.env, ...env, SWC_NODE_PROJECT: path.join(PROJECT_ROOT, 'server', 'tsconfig.json') },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  live.add(child);
  let text = '';
  let dropped = 0;
  const all: string[] = [];
  const on = (b: Buffer) => {
    const s = b.toString();
    text += s;
    if (text.length > 65_536) {
      dropped += text.length - 65_536;
      text = text.slice(-65_536);
    }
    for (const l of s.split('\n')) if (l.trim() && all.length < 20_000) all.push(l);
    if (echo)
      process.stdout.write(
        s
          .split('\n')
          .filter(Boolean)
          .map((l) => `[${name}] ${l}\n`)
          .join(''),
      );
  };
  child.stdout!.on('data', on);
  child.stderr!.on('data', on);
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) =>
    child.once('exit', (code, signal) => {
      live.delete(child);
      resolve({ code, signal });
    }),
  );
  return {
    name,
    pid: child.pid,
    get running() {
      return child.exitCode === null && child.signalCode === null;
    },
    output: () => text,
    lines: (re) => all.filter((l) => re.test(l)),
    offset: () => dropped + text.length,
    waitForLine(re, timeoutMs, fromOffset = 0) {
      return new Promise<void>((resolve, reject) => {
        const test = () => re.test(text.slice(Math.max(0, fromOffset - dropped)));
        if (test()) return resolve();
        const timer = setTimeout(() => {
          cleanup();
          reject(new Error(`${name} printed no line matching ${re} within ${timeoutMs} ms; output:\n${text.slice(-3000)}`));
        }, timeoutMs);
        const onData = () => {
          if (test()) {
            cleanup();
            resolve();
          }
        };
        const onExit = (code: number | null, sig: NodeJS.Signals | null) => {
          cleanup();
          reject(new Error(`${name} exited (code ${code}, signal ${sig}) before printing ${re}; output:\n${text.slice(-3000)}`));
        };
        const cleanup = () => {
          clearTimeout(timer);
          child.stdout!.off('data', onData);
          child.stderr!.off('data', onData);
          child.off('exit', onExit);
        };
        // Registered after the collector above, so `text` already holds the chunk.
        child.stdout!.on('data', onData);
        child.stderr!.on('data', onData);
        child.once('exit', onExit);
      });
    },
    async kill(signal) {
      if (child.exitCode === null && child.signalCode === null) child.kill(signal);
      const t = setTimeout(() => child.exitCode === null && child.signalCode === null && child.kill('SIGKILL'), 10_000);
      try {
        return await exited;
      } finally {
        clearTimeout(t);
      }
    },
  };
}

/** SIGTERM every process this module started (SIGKILL after the grace period). */
export async function stopAllProcesses(graceMs = 5000): Promise<void> {
  const children = [...live];
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGTERM');
  const deadline = Date.now() + graceMs;
  while (children.some((c) => c.exitCode === null && c.signalCode === null) && Date.now() < deadline) {
    await new Promise((r) => setTimeout(r, 50));
  }
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
}

// ---------------------------------------------------------------------------------------------
// The Emberlot stack (broker + API) on ephemeral ports

export const MQTT_SERVER = { username: 'emberlot-server', password: 'faults-server-secret' };

export interface StackPorts {
  api: number;
  mqtt: number;
  /** Nothing listens here: e-mail attempts fail fast and are retried by the notifier. */
  smtp: number;
}

export function stackEnv(db: DbConfig, ports: StackPorts, extra: Env = {}): Env {
  return {
    TZ: 'UTC',
    EMBERLOT_HOST: '127.0.0.1',
    EMBERLOT_PORT: String(ports.api),
    // Rollups held in memory go out within about a second (the books are checked right after a run).
    EMBERLOT_ROLLUP_FLUSH_MS: '500',
    EMBERLOT_MQTT_HOST: '127.0.0.1',
    EMBERLOT_MQTT_PORT: String(ports.mqtt),
    EMBERLOT_MQTT_URL: `mqtt://127.0.0.1:${ports.mqtt}`,
    EMBERLOT_MQTT_SERVER_USER: MQTT_SERVER.username,
    EMBERLOT_MQTT_SERVER_PASSWORD: MQTT_SERVER.password,
    EMBERLOT_SMTP_PORT: String(ports.smtp),
    EMBERLOT_DB_HOST: db.host,
    EMBERLOT_DB_PORT: String(db.port),
    EMBERLOT_DB_USER: db.user,
    EMBERLOT_DB_PASSWORD: db.password,
    EMBERLOT_DB_NAME: db.database,
    EMBERLOT_PG_PORT: String(db.port),
    EMBERLOT_WEB_DIR: '',
    EMBERLOT_UPLOAD_DIR: path.join(PROJECT_ROOT, '.data', 'faults-uploads'),
    // The session secret (not given here) is generated into this stack's own file.
    EMBERLOT_SECRETS_FILE: path.join(PROJECT_ROOT, '.data', 'faults-secrets.json'),
    ...extra,
  };
}

export const READY = { broker: /listening on mqtt:\/\//, api: /\[api\] listening on http:\/\// };
/** Cold start of a TypeScript process through swc on a loaded 2-core machine can take a while. */
export const START_TIMEOUT_MS = 45_000;

export async function startBrokerProcess(env: Env): Promise<NodeProcess> {
  const p = spawnTs('broker', 'broker/main.ts', env);
  await p.waitForLine(READY.broker, START_TIMEOUT_MS);
  return p;
}

export async function startApiProcess(env: Env): Promise<NodeProcess> {
  const p = spawnTs('api', 'server/main.ts', env);
  await p.waitForLine(READY.api, START_TIMEOUT_MS);
  return p;
}

// ---------------------------------------------------------------------------------------------
// A tiny HTTP client for the API process (session cookie kept by hand)

export interface ApiClient {
  signIn(email: string, password: string): Promise<void>;
  request<T = unknown>(method: string, urlPath: string, body?: unknown): Promise<{ status: number; body: T }>;
  /** The session cookie (`emberlot.sid=…`) once signed in, '' before (e.g. to open the floor's event stream). */
  cookie(): string;
}

export function apiClient(baseUrl: string): ApiClient {
  let cookie = '';
  const request = async <T>(method: string, urlPath: string, body?: unknown): Promise<{ status: number; body: T }> => {
    const res = await fetch(`${baseUrl}${urlPath}`, {
      method,
      headers: { 'content-type': 'application/json', ...(cookie ? { cookie } : {}) },
      body: body === undefined ? undefined : JSON.stringify(body),
      signal: AbortSignal.timeout(15_000),
    });
    const set = res.headers.getSetCookie?.() ?? [];
    const sid = set.map((c) => c.split(';')[0]).find((c) => c.startsWith('emberlot.sid='));
    if (sid) cookie = sid;
    const text = await res.text();
    let parsed: unknown = text;
    try {
      parsed = text ? JSON.parse(text) : null;
    } catch {
      /* not JSON */
    }
    return { status: res.status, body: parsed as T };
  };
  return {
    request,
    cookie: () => cookie,
    async signIn(email, password) {
      const r = await request('POST', '/api/auth/sign-in', { email, password });
      if (r.status !== 200) throw new Error(`sign-in as ${email} failed: ${r.status} ${JSON.stringify(r.body)}`);
    },
  };
}

// ---------------------------------------------------------------------------------------------
// A dedicated PostgreSQL cluster, started off the test's event loop

/**
 * Run scripts/pg-cluster.ts's startCluster/stopCluster in a child process: pg_ctl waits up to
 * tens of seconds and spawnSync would freeze the test process (and the simulated rigs in it).
 */
export async function pgClusterAsync(
  action: 'start' | 'stop',
  opts: { name: string; port: number; fast?: boolean; password?: string },
): Promise<void> {
  const fn = action === 'start' ? 'startCluster' : 'stopCluster';
  const code = `require(${JSON.stringify(path.join(PROJECT_ROOT, 'scripts', 'pg-cluster.ts'))}).${fn}(${JSON.stringify({ ...opts, quiet: true })})`;
  const child = spawn(process.execPath, ['-r', '@swc-node/register', '-e', code], {
    cwd: PROJECT_ROOT,
    env: { ...process.env, SWC_NODE_PROJECT: path.join(PROJECT_ROOT, 'server', 'tsconfig.json') },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  live.add(child);
  let out = '';
  child.stdout!.on('data', (b: Buffer) => (out += b.toString()));
  child.stderr!.on('data', (b: Buffer) => (out += b.toString()));
  const code2 = await new Promise<number | null>((resolve) =>
    child.once('exit', (c) => {
      live.delete(child);
      resolve(c);
    }),
  );
  if (code2 !== 0) throw new Error(`pg-cluster ${action} ${opts.name} failed (${code2}): ${out.slice(-2000)}`);
}

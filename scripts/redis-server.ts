/**
 * A private Redis for the broker cluster, from Debian's `redis-server` package (the model is
 * scripts/pg-cluster.ts):
 *
 * - installs the package when `redis-server` is missing (root: apt-get; otherwise says how) and
 *   stops the system-wide service Debian may start on install — Emberlot never uses it;
 * - runs its own instance on 127.0.0.1 only, with a non-default port and its data, pid and log under
 *   <project>/.data/redis/<name>, daemonised, never as a system service;
 * - is idempotent: a running instance on that port is reused, a stale pid file is removed;
 * - stops it with SHUTDOWN NOSAVE (throwaway) or SHUTDOWN (demo), falling back to SIGTERM.
 *
 * CLI: node -r @swc-node/register scripts/redis-server.ts start|stop|status|destroy [name] [port]
 */
import { execFileSync, spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as net from 'node:net';
import * as path from 'node:path';
import { PROJECT_ROOT } from './pg-cluster';

export interface RedisOptions {
  /** folder name under .data/redis: "cluster", "test-56430", "bench" */
  name: string;
  port: number;
  /** no RDB/AOF files: for throwaway test and bench instances */
  throwaway?: boolean;
  dataRoot?: string;
  quiet?: boolean;
}

export interface RedisInfo {
  host: string;
  port: number;
  dir: string;
  pid: number | null;
  url: string;
}

const BIN_DIRS = ['/usr/bin', '/usr/local/bin', '/usr/sbin'];

export function findRedisBin(name: 'redis-server' | 'redis-cli' = 'redis-server'): string | null {
  for (const d of BIN_DIRS) if (fs.existsSync(path.join(d, name))) return path.join(d, name);
  return null;
}

function isRoot(): boolean {
  return typeof process.getuid === 'function' && process.getuid() === 0;
}

export function ensureRedisInstalled(): string {
  let bin = findRedisBin();
  if (bin) return bin;
  if (!isRoot()) {
    throw new Error("Redis is missing. Install Debian's package first: sudo apt-get install -y redis-server");
  }
  console.log('[redis] installing Debian package redis-server (one time)…');
  execFileSync('apt-get', ['update'], { stdio: 'inherit' });
  execFileSync('apt-get', ['install', '-y', '--no-install-recommends', 'redis-server'], {
    stdio: 'inherit',
    env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
  });
  // The package may start a system-wide redis on 6379 (no systemd here: usually it does not).
  // Emberlot never uses it; stop it if it runs (ignore failure).
  spawnSync('service', ['redis-server', 'stop'], { stdio: 'ignore' });
  bin = findRedisBin();
  if (!bin) throw new Error('apt-get installed redis-server but no redis-server binary was found');
  return bin;
}

function log(opts: RedisOptions, msg: string): void {
  if (!opts.quiet) console.log(`[redis:${opts.name}] ${msg}`);
}

function paths(opts: RedisOptions) {
  const root = opts.dataRoot ?? process.env.EMBERLOT_DATA_ROOT ?? path.join(PROJECT_ROOT, '.data');
  const dir = path.join(root, 'redis', opts.name);
  return { dir, pidFile: path.join(dir, 'redis.pid'), logFile: path.join(dir, 'redis.log') };
}

function pidAlive(pid: number): boolean {
  try {
    return /redis/.test(fs.readFileSync(`/proc/${pid}/cmdline`, 'utf8'));
  } catch {
    return false;
  }
}

export function redisPid(opts: RedisOptions): number | null {
  const { pidFile } = paths(opts);
  if (!fs.existsSync(pidFile)) return null;
  const pid = Number(fs.readFileSync(pidFile, 'utf8').trim());
  return Number.isFinite(pid) && pidAlive(pid) ? pid : null;
}

/** One RESP command over a plain socket (no client library needed): the reply's first line. */
export function redisCommand(port: number, args: string[], timeoutMs = 2000): Promise<string> {
  return new Promise((resolve, reject) => {
    const sock = net.connect({ host: '127.0.0.1', port });
    let buf = '';
    const timer = setTimeout(() => {
      sock.destroy();
      reject(new Error(`redis on 127.0.0.1:${port} did not answer ${args[0]} within ${timeoutMs} ms`));
    }, timeoutMs);
    sock.on('connect', () => sock.write(`*${args.length}\r\n${args.map((a) => `$${Buffer.byteLength(a)}\r\n${a}\r\n`).join('')}`));
    sock.on('data', (d) => {
      buf += d.toString();
      if (buf.includes('\r\n')) {
        clearTimeout(timer);
        sock.end();
        resolve(buf.split('\r\n')[0]);
      }
    });
    sock.on('error', (e) => {
      clearTimeout(timer);
      reject(e);
    });
    sock.on('close', () => {
      clearTimeout(timer);
      if (!buf) reject(new Error(`redis on 127.0.0.1:${port} closed the connection`));
    });
  });
}

export async function redisStatus(opts: RedisOptions): Promise<'running' | 'stopped' | 'absent'> {
  if (!findRedisBin()) return 'absent';
  try {
    return (await redisCommand(opts.port, ['PING'], 1000)) === '+PONG' ? 'running' : 'stopped';
  } catch {
    return 'stopped';
  }
}

/** Start (or reuse) the private instance; resolves when it answers PING. */
export async function startRedis(opts: RedisOptions): Promise<RedisInfo> {
  const bin = ensureRedisInstalled();
  const { dir, pidFile, logFile } = paths(opts);
  fs.mkdirSync(dir, { recursive: true });
  const url = `redis://127.0.0.1:${opts.port}`;
  if ((await redisStatus(opts)) === 'running') {
    const pid = redisPid(opts);
    if (pid === null) {
      throw new Error(`port ${opts.port} already answers as a Redis that is not Emberlot's "${opts.name}"; choose another port`);
    }
    log(opts, `already running on 127.0.0.1:${opts.port}`);
    return { host: '127.0.0.1', port: opts.port, dir, pid, url };
  }
  if (fs.existsSync(pidFile) && redisPid(opts) === null) fs.rmSync(pidFile, { force: true });
  // Settings on the command line: no config file, no system paths. Protected mode stays on; only
  // loopback is bound. A throwaway instance never writes to disk.
  const args = [
    '--port',
    String(opts.port),
    '--bind',
    '127.0.0.1',
    '--dir',
    dir,
    '--pidfile',
    pidFile,
    '--logfile',
    logFile,
    '--daemonize',
    'yes',
    '--supervised',
    'no',
    '--databases',
    '2',
    ...(opts.throwaway ? ['--save', '', '--appendonly', 'no'] : ['--save', '60 1000', '--appendonly', 'yes', '--appendfsync', 'everysec']),
  ];
  log(opts, `starting on 127.0.0.1:${opts.port} (${dir})`);
  const r = spawnSync(bin, args, { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`redis-server failed to start (${r.status}): ${r.stderr || r.stdout}`);
  const deadline = Date.now() + 15_000;
  for (;;) {
    if ((await redisStatus(opts)) === 'running') break;
    if (Date.now() > deadline) {
      const tail = fs.existsSync(logFile) ? fs.readFileSync(logFile, 'utf8').split('\n').slice(-10).join('\n') : '';
      throw new Error(`redis on 127.0.0.1:${opts.port} did not answer PING within 15 s\n${tail}`);
    }
    await new Promise((res) => setTimeout(res, 100));
  }
  return { host: '127.0.0.1', port: opts.port, dir, pid: redisPid(opts), url };
}

export async function stopRedis(opts: RedisOptions): Promise<void> {
  const pid = redisPid(opts);
  if (pid === null) return;
  await redisCommand(opts.port, ['SHUTDOWN', opts.throwaway ? 'NOSAVE' : 'SAVE']).catch(() => undefined);
  const deadline = Date.now() + 5000;
  while (pidAlive(pid) && Date.now() < deadline) await new Promise((res) => setTimeout(res, 50));
  if (pidAlive(pid)) process.kill(pid, 'SIGKILL');
  log(opts, 'stopped');
}

/** Stop and remove a throwaway instance's folder. */
export async function destroyRedis(opts: RedisOptions): Promise<void> {
  await stopRedis(opts);
  fs.rmSync(paths(opts).dir, { recursive: true, force: true });
}

if (require.main === module) {
  const [cmd = 'status', name = 'cluster', portArg] = process.argv.slice(2);
  const port = Number(portArg ?? process.env.EMBERLOT_REDIS_PORT ?? 16379);
  const opts: RedisOptions = { name, port };
  const done = (p: Promise<unknown>) =>
    p.then(
      (v) => {
        if (v !== undefined) console.log(typeof v === 'string' ? v : JSON.stringify(v));
      },
      (e: unknown) => {
        console.error(`[redis] ${e instanceof Error ? e.message : e}`);
        process.exit(1);
      },
    );
  if (cmd === 'start') void done(startRedis(opts));
  else if (cmd === 'stop') void done(stopRedis(opts));
  else if (cmd === 'destroy') void done(destroyRedis(opts));
  else void done(redisStatus(opts));
}

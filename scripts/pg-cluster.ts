/**
 * A private PostgreSQL cluster for Emberlot, from Debian's `postgresql` package.
 *
 * - installs the package when its binaries are missing (root: apt-get; otherwise says how);
 * - keeps data in a git-ignored folder of the checkout (or /var/tmp when the checkout cannot be
 *   traversed by the user that runs postgres), listens on 127.0.0.1 only on a non-default port,
 *   and puts its unix socket in the project;
 * - works as root (postgres refuses to run as root, so it runs as the data folder's owner, else the
 *   Debian `postgres` user, else a system user created once) and as a normal user;
 * - is idempotent: a running cluster is reused, a stale postmaster.pid is removed, a crashed server
 *   recovers on start.
 *
 * CLI: node -r @swc-node/register scripts/pg-cluster.ts start|stop|status [name] [port]
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { LOOPBACK_ONLY_SECRETS, withSecrets } from '../server/secrets';

export interface ClusterOptions {
  /** folder name under the data root: "demo", "test", "bench" */
  name: string;
  port: number;
  /** durability off (fsync, synchronous_commit): for throwaway test and bench clusters */
  fast?: boolean;
  /** where the cluster lives; defaults to <project>/.data */
  dataRoot?: string;
  quiet?: boolean;
  /**
   * The role's password. Given (the demo cluster: from .data/secrets.json), it is also set on a
   * cluster that already exists, over the local socket, so a cluster made before the secrets file
   * follows it. Default DB_PASSWORD, for throwaway clusters on 127.0.0.1.
   */
  password?: string;
}

export interface ClusterInfo {
  host: string;
  port: number;
  user: string;
  password: string;
  socketDir: string;
  dataDir: string;
  logFile: string;
}

export const PROJECT_ROOT = path.resolve(__dirname, '..');
export const DB_USER = 'emberlot';
/** Throwaway (test, e2e, bench) clusters only; the demo cluster gets the generated one (scripts/start.ts). */
export const DB_PASSWORD = process.env.EMBERLOT_DB_PASSWORD || LOOPBACK_ONLY_SECRETS.dbPassword;

function log(opts: ClusterOptions, msg: string): void {
  if (!opts.quiet) console.log(`[pg:${opts.name}] ${msg}`);
}

export function findPgBin(): string | null {
  const base = '/usr/lib/postgresql';
  if (!fs.existsSync(base)) return null;
  const versions = fs
    .readdirSync(base)
    .filter((v) => fs.existsSync(path.join(base, v, 'bin', 'initdb')))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(base, versions[0], 'bin') : null;
}

function isRoot(): boolean {
  return typeof process.getuid === 'function' && process.getuid() === 0;
}

export function ensurePostgresInstalled(): string {
  let bin = findPgBin();
  if (bin) return bin;
  if (!isRoot()) {
    throw new Error("PostgreSQL's server binaries are missing. Install Debian's package first: sudo apt-get install -y postgresql");
  }
  console.log('[pg] installing Debian package postgresql (one time)…');
  execFileSync('apt-get', ['update'], { stdio: 'inherit' });
  execFileSync('apt-get', ['install', '-y', '--no-install-recommends', 'postgresql'], {
    stdio: 'inherit',
    env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
  });
  // Debian starts a system-wide cluster on install; Emberlot never uses it, and must not
  // depend on it. Stop it if the package started one (ignore failure: no systemd here).
  spawnSync('pg_ctlcluster', ['--skip-systemctl-redirect', '15', 'main', 'stop'], { stdio: 'ignore' });
  bin = findPgBin();
  if (!bin) throw new Error('apt-get installed postgresql but no initdb was found under /usr/lib/postgresql');
  return bin;
}

/** Every folder from / down to dir can be entered by uid (other-x or owner). */
function traversableBy(dir: string, uid: number, gid: number): boolean {
  let cur = path.resolve(dir);
  for (;;) {
    if (fs.existsSync(cur)) {
      const st = fs.statSync(cur);
      const ok = st.uid === uid ? (st.mode & 0o100) !== 0 : st.gid === gid ? (st.mode & 0o010) !== 0 : (st.mode & 0o001) !== 0;
      if (!ok) return false;
    }
    const parent = path.dirname(cur);
    if (parent === cur) return true;
    cur = parent;
  }
}

interface RunAs {
  user: string | null; // null: run directly as the caller
  uid: number;
  gid: number;
}

function lookupUser(name: string): { uid: number; gid: number } | null {
  const r = spawnSync('id', ['-u', name], { encoding: 'utf8' });
  if (r.status !== 0) return null;
  const g = spawnSync('id', ['-g', name], { encoding: 'utf8' });
  return { uid: Number(r.stdout.trim()), gid: Number(g.stdout.trim()) };
}

function chooseRunAs(dataDir: string): RunAs {
  if (!isRoot()) return { user: null, uid: process.getuid!(), gid: process.getgid!() };
  if (fs.existsSync(dataDir)) {
    const st = fs.statSync(dataDir);
    if (st.uid !== 0) {
      const name = spawnSync('id', ['-nu', String(st.uid)], { encoding: 'utf8' }).stdout.trim();
      if (name) return { user: name, uid: st.uid, gid: st.gid };
    }
  }
  for (const name of ['postgres', 'emberlot-pg']) {
    const u = lookupUser(name);
    if (u) return { user: name, ...u };
  }
  execFileSync('useradd', ['--system', '--no-create-home', '--shell', '/usr/sbin/nologin', 'emberlot-pg']);
  const u = lookupUser('emberlot-pg');
  if (!u) throw new Error('could not create the system user emberlot-pg to run PostgreSQL');
  return { user: 'emberlot-pg', ...u };
}

function dataRootFor(opts: ClusterOptions): string {
  if (opts.dataRoot) return opts.dataRoot;
  if (process.env.EMBERLOT_DATA_ROOT) return process.env.EMBERLOT_DATA_ROOT;
  return path.join(PROJECT_ROOT, '.data');
}

function run(runAs: RunAs, cmd: string, args: string[], opts: { allowFail?: boolean; env?: NodeJS.ProcessEnv; input?: string } = {}) {
  const full = runAs.user ? ['runuser', ['-u', runAs.user, '--', cmd, ...args]] : [cmd, args];
  const r = spawnSync(full[0] as string, full[1] as string[], {
    encoding: 'utf8',
    input: opts.input,
    env: { ...process.env, ...opts.env, LC_ALL: 'C' },
  });
  if (r.status !== 0 && !opts.allowFail) {
    throw new Error(`${cmd} ${args.join(' ')} failed (${r.status}): ${r.stderr || r.stdout}`);
  }
  return r;
}

function pidAlive(pid: number): boolean {
  try {
    const cmdline = fs.readFileSync(`/proc/${pid}/cmdline`, 'utf8');
    return /postgres/.test(cmdline);
  } catch {
    return false;
  }
}

/** postmaster.pid whose pid is gone or now belongs to another program: pg_ctl would trust it. */
function removeStalePid(dataDir: string, opts: ClusterOptions): void {
  const pidFile = path.join(dataDir, 'postmaster.pid');
  if (!fs.existsSync(pidFile)) return;
  const pid = Number(fs.readFileSync(pidFile, 'utf8').split('\n')[0]);
  if (!Number.isFinite(pid) || !pidAlive(pid)) {
    log(opts, `removing stale postmaster.pid (pid ${pid} is not a postgres process)`);
    fs.rmSync(pidFile, { force: true });
  }
}

function clusterPaths(opts: ClusterOptions) {
  let root = dataRootFor(opts);
  const dataDir = () => path.join(root, 'pg', opts.name);
  let runAs = chooseRunAs(dataDir());
  if (runAs.user && !traversableBy(root, runAs.uid, runAs.gid)) {
    // A checkout under a mode-700 home cannot be entered by the postgres user.
    const key = createHash('sha1').update(PROJECT_ROOT).digest('hex').slice(0, 10);
    root = path.join(os.tmpdir() === '/tmp' ? '/var/tmp' : os.tmpdir(), `emberlot-${key}`);
    runAs = chooseRunAs(dataDir());
  }
  // The socket lives in the project when it can; the path must stay under 107 bytes.
  let socketDir = path.join(root, 'run', opts.name);
  if (socketDir.length > 80) socketDir = path.join('/tmp', `emberlot-${opts.name}-${opts.port}`);
  return { root, dataDir: dataDir(), socketDir, logFile: path.join(root, 'log', `pg-${opts.name}.log`), runAs };
}

function chownTree(p: string, runAs: RunAs) {
  if (runAs.user) fs.chownSync(p, runAs.uid, runAs.gid);
}

export function clusterStatus(opts: ClusterOptions): 'running' | 'stopped' | 'absent' {
  const bin = findPgBin();
  if (!bin) return 'absent';
  const { dataDir, runAs } = clusterPaths(opts);
  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) return 'absent';
  removeStalePid(dataDir, opts);
  const r = run(runAs, path.join(bin, 'pg_ctl'), ['-D', dataDir, 'status'], { allowFail: true });
  return r.status === 0 ? 'running' : 'stopped';
}

export function startCluster(opts: ClusterOptions): ClusterInfo {
  const bin = ensurePostgresInstalled();
  const { root, dataDir, socketDir, logFile, runAs } = clusterPaths(opts);
  const password = opts.password ?? DB_PASSWORD;
  let created = false;
  for (const d of [root, path.join(root, 'pg'), path.dirname(logFile), path.dirname(socketDir)]) {
    fs.mkdirSync(d, { recursive: true });
  }
  fs.mkdirSync(socketDir, { recursive: true });
  if (socketDir.startsWith('/tmp/')) fs.chmodSync(socketDir, 0o700);
  chownTree(socketDir, runAs);
  if (!fs.existsSync(logFile)) fs.writeFileSync(logFile, '');
  chownTree(logFile, runAs);

  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) {
    log(opts, `creating cluster in ${dataDir}`);
    fs.rmSync(dataDir, { recursive: true, force: true });
    fs.mkdirSync(dataDir, { recursive: true, mode: 0o700 });
    chownTree(dataDir, runAs);
    const pwFile = path.join(root, `.pw-${opts.name}-${process.pid}`);
    fs.writeFileSync(pwFile, password + '\n', { mode: 0o600 });
    created = true;
    chownTree(pwFile, runAs);
    try {
      run(runAs, path.join(bin, 'initdb'), [
        '-D',
        dataDir,
        '-U',
        DB_USER,
        '--pwfile',
        pwFile,
        '-E',
        'UTF8',
        '--locale',
        'C',
        '--auth-local',
        'trust',
        '--auth-host',
        'scram-sha-256',
      ]);
    } finally {
      fs.rmSync(pwFile, { force: true });
    }
  }

  removeStalePid(dataDir, opts);
  const status = run(runAs, path.join(bin, 'pg_ctl'), ['-D', dataDir, 'status'], { allowFail: true });
  if (status.status !== 0) {
    const settings = [
      `-p ${opts.port}`,
      `-k ${socketDir}`,
      `-c listen_addresses=127.0.0.1`,
      `-c max_connections=200`,
      ...(opts.fast ? ['-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off'] : []),
    ].join(' ');
    log(opts, `starting on 127.0.0.1:${opts.port}`);
    run(runAs, path.join(bin, 'pg_ctl'), ['-D', dataDir, '-l', logFile, '-o', settings, '-w', '-t', '60', 'start']);
  } else {
    log(opts, `already running on 127.0.0.1:${opts.port}`);
  }
  if (opts.password !== undefined && !created) setRolePassword(bin, runAs, socketDir, opts.port, password);
  return { host: '127.0.0.1', port: opts.port, user: DB_USER, password, socketDir, dataDir, logFile };
}

/**
 * ALTER ROLE over the unix socket (trusted for the cluster's own user): the password goes through
 * psql's stdin, never a command line, and PostgreSQL stores it as a SCRAM verifier.
 */
function setRolePassword(bin: string, runAs: RunAs, socketDir: string, port: number, password: string): void {
  const literal = `'${password.replace(/'/g, "''")}'`;
  run(
    runAs,
    path.join(bin, 'psql'),
    ['-X', '-q', '-v', 'ON_ERROR_STOP=1', '-h', socketDir, '-p', String(port), '-U', DB_USER, '-d', 'postgres'],
    {
      input: `SET log_statement = 'none';\nALTER ROLE ${DB_USER} PASSWORD ${literal};\n`,
    },
  );
}

export function stopCluster(opts: ClusterOptions): void {
  const bin = findPgBin();
  if (!bin) return;
  const { dataDir, runAs } = clusterPaths(opts);
  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) return;
  removeStalePid(dataDir, opts);
  run(runAs, path.join(bin, 'pg_ctl'), ['-D', dataDir, '-m', 'fast', '-w', 'stop'], { allowFail: true });
  log(opts, 'stopped');
}

/** Remove a throwaway cluster's folder entirely (tests, bench). */
export function destroyCluster(opts: ClusterOptions): void {
  stopCluster(opts);
  const { dataDir } = clusterPaths(opts);
  fs.rmSync(dataDir, { recursive: true, force: true });
}

/** The pid of the running postmaster, or null. */
export function clusterPid(opts: ClusterOptions): number | null {
  const { dataDir } = clusterPaths(opts);
  const pidFile = path.join(dataDir, 'postmaster.pid');
  if (!fs.existsSync(pidFile)) return null;
  const pid = Number(fs.readFileSync(pidFile, 'utf8').split('\n')[0]);
  return pidAlive(pid) ? pid : null;
}

if (require.main === module) {
  const [cmd = 'status', name = 'demo', portArg] = process.argv.slice(2);
  const port = Number(portArg ?? process.env.EMBERLOT_PG_PORT ?? 54329);
  // The demo cluster's password is the generated one (.data/secrets.json), as npm start sets it.
  const password = name === 'demo' ? withSecrets(process.env).env.EMBERLOT_DB_PASSWORD : undefined;
  const opts: ClusterOptions = { name, port, ...(password ? { password } : {}) };
  if (cmd === 'start') console.log(JSON.stringify(startCluster(opts)));
  else if (cmd === 'stop') stopCluster(opts);
  else if (cmd === 'destroy') destroyCluster(opts);
  else console.log(clusterStatus(opts));
}

/** Create the database when it does not exist yet (CREATE DATABASE cannot run in a transaction). */
export async function ensureDatabase(info: ClusterInfo, database: string, template?: string): Promise<boolean> {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const { Client } = require('pg') as typeof import('pg');
  const client = new Client({ host: info.host, port: info.port, user: info.user, password: info.password, database: 'postgres' });
  await client.connect();
  try {
    const r = await client.query('SELECT 1 FROM pg_database WHERE datname = $1', [database]);
    if (r.rowCount) return false;
    const ident = (s: string) => '"' + s.replace(/"/g, '""') + '"';
    await client.query(`CREATE DATABASE ${ident(database)}${template ? ` TEMPLATE ${ident(template)}` : ''}`);
    return true;
  } finally {
    await client.end();
  }
}

export async function dropDatabase(info: ClusterInfo, database: string): Promise<void> {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const { Client } = require('pg') as typeof import('pg');
  const client = new Client({ host: info.host, port: info.port, user: info.user, password: info.password, database: 'postgres' });
  await client.connect();
  try {
    await client.query(`DROP DATABASE IF EXISTS "${database.replace(/"/g, '""')}" WITH (FORCE)`);
  } finally {
    await client.end();
  }
}

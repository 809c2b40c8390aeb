/**
 * `npm start`: one command that brings up the whole product on 127.0.0.1 with demo data.
 * PostgreSQL (private cluster) → migrations + demo seed → web export (only when its sources
 * changed) → fake SMTP + MQTT broker → API (serving the web app too) → rig simulator.
 * Ctrl-C stops every child and the database cleanly.
 *
 * --dev: the Expo dev server instead of the static export (see DEVELOPERS.md).
 */
import 'reflect-metadata';
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { configFromEnv } from '../server/config';
import { createDataSource } from '../server/db/data-source';
import { DEMO_USERS } from '../server/seed/demo-data';
import { seedIfEmpty } from '../server/seed/seed';
import { ensureDatabase, PROJECT_ROOT, startCluster, stopCluster } from './pg-cluster';
import { PROCESSES } from './processes';

const dev = process.argv.includes('--dev');
const pgPort = Number(process.env.EMBERLOT_PG_PORT ?? 54329);
const WEB_DIR = path.join(PROJECT_ROOT, 'dist', 'web');
const WEB_SOURCES = ['app', 'components', 'shared', 'assets', 'app.json', 'package-lock.json', 'tsconfig.json'];

function hashSources(): string {
  const h = createHash('sha256');
  const walk = (p: string) => {
    if (!fs.existsSync(p)) return;
    const st = fs.statSync(p);
    if (st.isDirectory()) for (const f of fs.readdirSync(p).sort()) walk(path.join(p, f));
    else h.update(path.relative(PROJECT_ROOT, p)).update(fs.readFileSync(p));
  };
  WEB_SOURCES.forEach((s) => walk(path.join(PROJECT_ROOT, s)));
  return h.digest('hex');
}

/** Re-export the web app only when app/components/shared/assets changed: a cold export takes minutes. */
export function ensureWebExport(log = console.log): void {
  const stamp = path.join(WEB_DIR, '.source-hash');
  const hash = hashSources();
  if (fs.existsSync(stamp) && fs.readFileSync(stamp, 'utf8') === hash && fs.existsSync(path.join(WEB_DIR, 'index.html'))) {
    log('[web] export is up to date');
    return;
  }
  log('[web] exporting the web app (first time takes a few minutes)…');
  const t = Date.now();
  const r = spawnSync(process.execPath, [require.resolve('expo/bin/cli'), 'export', '-p', 'web', '--output-dir', WEB_DIR], {
    cwd: PROJECT_ROOT,
    stdio: ['ignore', 'inherit', 'inherit'],
    env: { ...process.env, CI: '1', EXPO_NO_TELEMETRY: '1' },
  });
  if (r.status !== 0) throw new Error('expo export failed');
  fs.writeFileSync(stamp, hash);
  log(`[web] exported in ${Math.round((Date.now() - t) / 1000)} s`);
}

async function main() {
  const t0 = Date.now();
  const pg = startCluster({ name: 'demo', port: pgPort });
  const config = configFromEnv({ ...process.env, EMBERLOT_DB_PORT: String(pgPort) });
  await ensureDatabase(pg, config.db.database);
  const ds = createDataSource(config.db);
  await ds.initialize();
  await seedIfEmpty(ds);
  await ds.destroy();
  if (!dev) ensureWebExport();

  const env: NodeJS.ProcessEnv = {
    ...process.env,
    SWC_NODE_PROJECT: path.join(PROJECT_ROOT, 'server', 'tsconfig.json'),
    EMBERLOT_DB_PORT: String(pgPort),
    EMBERLOT_WEB_DIR: dev ? '' : WEB_DIR,
    EMBERLOT_DEV_PROXY: dev ? 'http://127.0.0.1:8081' : '',
  };
  const children: ChildProcess[] = [];
  let stopping = false;
  const stopAll = (code: number) => {
    if (stopping) return;
    stopping = true;
    console.log('\n[start] stopping…');
    for (const c of [...children].reverse()) if (c.exitCode === null) c.kill('SIGTERM');
    const deadline = Date.now() + 8000;
    const wait = () => {
      if (children.every((c) => c.exitCode !== null || c.signalCode !== null) || Date.now() > deadline) {
        for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
        stopCluster({ name: 'demo', port: pgPort });
        process.exit(code);
      } else setTimeout(wait, 100);
    };
    wait();
  };
  process.on('SIGINT', () => stopAll(0));
  process.on('SIGTERM', () => stopAll(0));

  for (const p of PROCESSES) {
    if (p.devOnly && !dev) continue;
    const child = spawn(p.command[0], p.command.slice(1), { cwd: PROJECT_ROOT, env: { ...env, ...p.env }, stdio: ['ignore', 'pipe', 'pipe'] });
    const prefix = (line: string) => `[${p.name}] ${line}`;
    child.stdout!.on('data', (b: Buffer) => b.toString().split('\n').filter(Boolean).forEach((l) => console.log(prefix(l))));
    child.stderr!.on('data', (b: Buffer) => b.toString().split('\n').filter(Boolean).forEach((l) => console.error(prefix(l))));
    child.on('exit', (code, sig) => {
      if (!stopping) {
        console.error(`[start] ${p.name} exited (${code ?? sig}); stopping everything`);
        stopAll(1);
      }
    });
    children.push(child);
    if (p.waitFor) await waitForLine(child, p.waitFor, p.name);
  }

  const url = `http://127.0.0.1:${config.port}`;
  console.log(`
  Emberlot is running at ${url}   (ready in ${Math.round((Date.now() - t0) / 1000)} s; Ctrl-C stops everything)

  Demo sign-ins (invented lab of Harrowgate Power Devices):
${DEMO_USERS.map((u) => `    ${u.role.padEnd(9)} ${u.email.padEnd(34)} ${u.password}`).join('\n')}

  Safety: Emberlot's software trip is no substitute for a rig's hardware interlocks. Follow your
  lab's safety rules and local codes around high voltage, hot ovens and parts that can burst.
`);
}

function waitForLine(child: ChildProcess, re: RegExp, name: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`${name} did not report ready within 60 s`)), 60000);
    const on = (b: Buffer) => {
      if (re.test(b.toString())) {
        clearTimeout(timer);
        child.stdout!.off('data', on);
        resolve();
      }
    };
    child.stdout!.on('data', on);
    child.on('exit', () => reject(new Error(`${name} exited before it was ready`)));
  });
}

main().catch((e) => {
  console.error('[start] failed:', e instanceof Error ? e.message : e);
  stopCluster({ name: 'demo', port: pgPort });
  process.exit(1);
});

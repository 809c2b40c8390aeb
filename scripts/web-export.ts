import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { PROJECT_ROOT } from './pg-cluster';

export const WEB_DIR = path.join(PROJECT_ROOT, 'dist', 'web');
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

/** Re-export the web app only when its sources changed: a cold export takes minutes. */
export function ensureWebExport(log: (m: string) => void = console.log): void {
  const stamp = path.join(WEB_DIR, '.source-hash');
  const hash = hashSources();
  if (fs.existsSync(stamp) && fs.readFileSync(stamp, 'utf8') === hash && fs.existsSync(path.join(WEB_DIR, 'index.html'))) {
    log('[web] export is up to date');
    return;
  }
  log('[web] exporting the web app (the first time takes a few minutes)…');
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

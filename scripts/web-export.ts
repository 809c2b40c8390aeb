import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as path from 'node:path';
import * as zlib from 'node:zlib';
import { PROJECT_ROOT } from './pg-cluster';

export const WEB_DIR = path.join(PROJECT_ROOT, 'dist', 'web');
/** The export's source maps, kept out of the served folder (scripts/web-size.ts reads them). */
export const WEB_MAPS_DIR = path.join(PROJECT_ROOT, 'dist', 'web-sourcemaps');
/** Changes when the export's own steps change, so an export made by an older version of this file is redone. */
const EXPORT_STEPS = 'source maps kept beside the export, v2';
const WEB_SOURCES = ['app', 'components', 'shared', 'assets', 'app.json', 'package-lock.json', 'tsconfig.json'];

function hashSources(): string {
  const h = createHash('sha256').update(EXPORT_STEPS);
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
  if (
    fs.existsSync(stamp) &&
    fs.readFileSync(stamp, 'utf8') === hash &&
    fs.existsSync(path.join(WEB_DIR, 'index.html')) &&
    fs.existsSync(WEB_MAPS_DIR)
  ) {
    log('[web] export is up to date');
    return;
  }
  log('[web] exporting the web app (the first time takes a few minutes)…');
  const t = Date.now();
  fs.rmSync(stamp, { force: true });
  const r = spawnSync(
    process.execPath,
    [require.resolve('expo/bin/cli'), 'export', '-p', 'web', '--source-maps', '--output-dir', WEB_DIR],
    {
      cwd: PROJECT_ROOT,
      stdio: ['ignore', 'inherit', 'inherit'],
      // Always a production build: expo keeps a NODE_ENV it finds, and jest (tests/unit/web-budget.test.ts) sets 'test'.
      env: { ...process.env, CI: '1', EXPO_NO_TELEMETRY: '1', NODE_ENV: 'production', BABEL_ENV: 'production' },
    },
  );
  if (r.status !== 0) throw new Error('expo export failed');
  moveSourceMaps(WEB_DIR, WEB_MAPS_DIR);
  const c = precompress(WEB_DIR);
  log(`[web] precompressed ${c.files} files: ${Math.round(c.bytes / 1024)} KB → ${Math.round(c.brotli / 1024)} KB brotli`);
  fs.writeFileSync(stamp, hash);
  log(`[web] exported in ${Math.round((Date.now() - t) / 1000)} s`);
}

/**
 * Moves every `.map` of the export into `mapsDir` (same relative paths) and drops the comments that point
 * at them, so the served scripts carry no map reference and the maps are not served.
 */
export function moveSourceMaps(webDir: string, mapsDir: string): void {
  fs.rmSync(mapsDir, { recursive: true, force: true });
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name.endsWith('.js.map')) {
        const to = path.join(mapsDir, path.relative(webDir, p));
        fs.mkdirSync(path.dirname(to), { recursive: true });
        fs.renameSync(p, to);
      } else if (e.name.endsWith('.js')) {
        const text = fs.readFileSync(p, 'utf8');
        const bare = text.replace(/\n\/\/# (sourceMappingURL|debugId)=[^\n]*/g, '');
        if (bare !== text) fs.writeFileSync(p, bare);
      }
    }
  };
  walk(webDir);
}

const COMPRESSIBLE = /\.(js|css|html|json|ttf|otf|ico|svg|txt|map)$/;

/**
 * Writes `x.br` (brotli, quality 11) and `x.gz` (gzip -9) beside every compressible file of the export,
 * when they are smaller: the server sends them as they are (server/http/web-static.ts), so the
 * costly brotli levels are paid once here, not per request.
 */
export function precompress(dir: string): { files: number; bytes: number; brotli: number } {
  const out = { files: 0, bytes: 0, brotli: 0 };
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (COMPRESSIBLE.test(e.name)) {
        const raw = fs.readFileSync(p);
        const br = zlib.brotliCompressSync(raw, {
          params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 11, [zlib.constants.BROTLI_PARAM_SIZE_HINT]: raw.length },
        });
        const gz = zlib.gzipSync(raw, { level: 9 });
        if (br.length < raw.length) fs.writeFileSync(`${p}.br`, br);
        if (gz.length < raw.length) fs.writeFileSync(`${p}.gz`, gz);
        out.files += 1;
        out.bytes += raw.length;
        out.brotli += Math.min(br.length, raw.length);
      }
    }
  };
  walk(dir);
  return out;
}

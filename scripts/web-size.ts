/**
 * What a first visit to /sign-in downloads from the web export, file by file (brotli bytes, as
 * server/http/web-static.ts sends them), and which source modules fill each script (from the source maps
 * scripts/web-export.ts keeps beside the export). `npm run web-size` prints it; tests/unit/web-budget.test.ts
 * fails when the total passes `SIGN_IN_BUDGET_KB` and names what grew.
 *
 * The files: the document, the scripts index.html loads (Metro's runtime, `__common`, the entry), the route
 * chunks the entry asks for on /sign-in (components/common/route-prefetch.ts: the root layout and the page),
 * every layout's chunk (Expo Router loads each at start-up), the core Lexend file of each weight
 * (components/common/web-fonts.ts waits for those) and the favicon.
 * Each HTTP response also carries headers; the bench's `coldSignInKb` (bench/README.md "web") counts
 * them, this adds `HEADER_BYTES_PER_RESPONSE` per file instead.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import * as zlib from 'node:zlib';
import { routeFilesFor } from '../components/common/route-prefetch';

/** The most a cold sign-in may download (bodies + headers as estimated here), in KB of 1024 bytes. */
export const SIGN_IN_BUDGET_KB = 335;
/**
 * Response headers per file as Chromium counts them on the wire (`encodedDataLength` less the body): the
 * security headers (helmet) make most of them. Measured in the bench's web scenario on 2026-12-05:
 * `coldSignInBytesByFile` less the files' brotli sizes, 965–1,035 bytes per response.
 */
export const HEADER_BYTES_PER_RESPONSE = 1000;

export interface LoadedFile {
  /** Path inside the export (e.g. `_expo/static/js/web/__common-<hash>.js`). */
  file: string;
  /** A name without the content hash (`__common.js`, `app/_layout.tsx chunk`, `Lexend_400Regular.woff2`). */
  label: string;
  kind: 'document' | 'script' | 'font' | 'icon';
  /** Bytes on the wire: the brotli twin when the export has one and it is smaller, else the file. */
  bytes: number;
  rawBytes: number;
}

export interface ModuleSize {
  /** A source path (`components/ui/Button.tsx`) or a package (`node_modules/zod`). */
  source: string;
  rawBytes: number;
  /** The module's share of its file's brotli bytes, in proportion to its raw bytes (an estimate). */
  estBytes: number;
}

const SCRIPT_TAG = /<script[^>]+src="\/([^"]+\.js)"/g;

function wireBytes(webDir: string, file: string): { bytes: number; rawBytes: number } {
  const p = path.join(webDir, file);
  const rawBytes = fs.statSync(p).size;
  const br = `${p}.br`;
  if (fs.existsSync(br)) return { bytes: Math.min(rawBytes, fs.statSync(br).size), rawBytes };
  // An export without twins (e.g. `expo export` by hand): compress as scripts/web-export.ts would.
  if (/\.(js|css|html|json|ttf|otf|ico|svg|txt)$/.test(file)) {
    const raw = fs.readFileSync(p);
    const b = zlib.brotliCompressSync(raw, { params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 11 } }).length;
    return { bytes: Math.min(b, rawBytes), rawBytes };
  }
  return { bytes: rawBytes, rawBytes };
}

const unhashed = (name: string) => name.replace(/[-.][0-9a-f]{32}(?=\.)/, '');

/** The sources a script's source map names (empty when the map is missing). */
export function mapSources(mapsDir: string, script: string): string[] {
  const m = path.join(mapsDir, `${script}.map`);
  if (!fs.existsSync(m)) return [];
  return (JSON.parse(fs.readFileSync(m, 'utf8')) as { sources: string[] }).sources;
}

/** The route chunk whose source map holds the route file `app/<key>` (keys as in route-prefetch.ts). */
function routeChunk(webDir: string, mapsDir: string, key: string): string | null {
  const source = `/app/${key.replace(/^\.\//, '')}`;
  const dir = '_expo/static/js/web';
  const stem = path.basename(key).replace(/\.tsx?$/, '');
  for (const f of fs.readdirSync(path.join(webDir, dir))) {
    if (!f.endsWith('.js') || unhashed(f) !== `${stem}.js`) continue;
    if (mapSources(mapsDir, `${dir}/${f}`).includes(source)) return `${dir}/${f}`;
  }
  return null;
}

/** Route files (keys as in route-prefetch.ts) under app/ whose name is `_layout.tsx`. */
function layoutFiles(dir = path.join(__dirname, '..', 'app'), prefix = '.'): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    if (e.isDirectory()) return layoutFiles(path.join(dir, e.name), `${prefix}/${e.name}`);
    return e.name === '_layout.tsx' ? [`${prefix}/${e.name}`] : [];
  });
}

/**
 * The route files /sign-in loads: the ones the entry asks for (route-prefetch.ts) and every layout, which
 * Expo Router loads at start-up to read its `unstable_settings` (expo-router/build/getRoutesCore.js), so
 * the signed-in shell's layout chunk travels with the first visit too.
 */
export function signInRouteFiles(): string[] {
  return [...new Set([...routeFilesFor('/sign-in'), ...layoutFiles()])];
}

/** Every file a first visit to /sign-in downloads, in the order the browser asks for them. */
export function signInFiles(webDir: string, mapsDir: string): LoadedFile[] {
  const out: LoadedFile[] = [];
  const add = (file: string, label: string, kind: LoadedFile['kind']) => out.push({ file, label, kind, ...wireBytes(webDir, file) });
  add('index.html', 'index.html', 'document');
  const html = fs.readFileSync(path.join(webDir, 'index.html'), 'utf8');
  for (const m of html.matchAll(SCRIPT_TAG)) add(m[1], unhashed(path.basename(m[1])), 'script');
  for (const key of signInRouteFiles()) {
    const chunk = routeChunk(webDir, mapsDir, key);
    if (!chunk) throw new Error(`no chunk in ${webDir} holds app/${key.slice(2)} (source maps missing? run scripts/web-export.ts)`);
    add(chunk, `app/${key.slice(2)} chunk`, 'script');
  }
  const fontDir = path.join(webDir, 'assets', 'assets', 'fonts');
  for (const f of fs.readdirSync(fontDir).sort())
    if (/^Lexend_\w+\.[0-9a-f]{32}\.woff2$/.test(f)) add(path.posix.join('assets/assets/fonts', f), unhashed(f), 'font');
  if (fs.existsSync(path.join(webDir, 'favicon.ico'))) add('favicon.ico', 'favicon.ico', 'icon');
  return out;
}

const B64 = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';

/** Decodes one line of a source map's `mappings` into [generated column, source index] pairs. */
function decodeLine(line: string, state: { source: number }): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  let col = 0;
  for (const seg of line.split(',')) {
    if (!seg) continue;
    const fields: number[] = [];
    let value = 0;
    let shift = 0;
    for (const ch of seg) {
      const digit = B64.indexOf(ch);
      value += (digit & 31) << shift;
      if (digit & 32) shift += 5;
      else {
        fields.push(value & 1 ? -(value >>> 1) : value >>> 1);
        value = 0;
        shift = 0;
      }
    }
    col += fields[0];
    if (fields.length >= 4) {
      state.source += fields[1];
      out.push([col, state.source]);
    } else out.push([col, -1]);
  }
  return out;
}

/** A package's name from a source path inside node_modules (`/node_modules/@a/b/x.js` → `node_modules/@a/b`). */
export function sourceGroup(source: string): string {
  const s = source.replace(/^\/+/, '');
  const i = s.lastIndexOf('node_modules/');
  if (i < 0) return s;
  const rest = s.slice(i + 'node_modules/'.length).split('/');
  return `node_modules/${rest[0].startsWith('@') ? `${rest[0]}/${rest[1]}` : rest[0]}`;
}

/**
 * Raw bytes of a script per source (packages grouped), from its source map; the generated text no
 * mapping covers (Metro's module wrappers) counts as `(wrapper)`.
 */
export function moduleSizes(webDir: string, mapsDir: string, script: string, byPackage = true): ModuleSize[] {
  const mapFile = path.join(mapsDir, `${script}.map`);
  if (!fs.existsSync(mapFile)) return [];
  const map = JSON.parse(fs.readFileSync(mapFile, 'utf8')) as { sources: string[]; mappings: string };
  const lines = fs.readFileSync(path.join(webDir, script), 'utf8').split('\n');
  const sizes = new Map<string, number>();
  const bump = (k: string, n: number) => sizes.set(k, (sizes.get(k) ?? 0) + n);
  const state = { source: 0 };
  const mapLines = map.mappings.split(';');
  lines.forEach((text, i) => {
    const segs = i < mapLines.length ? decodeLine(mapLines[i], state) : [];
    let covered = 0;
    segs.forEach(([col, src], j) => {
      const end = j + 1 < segs.length ? segs[j + 1][0] : text.length;
      if (j === 0 && col > 0) bump('(wrapper)', col);
      const name = src < 0 ? '(wrapper)' : byPackage ? sourceGroup(map.sources[src]) : map.sources[src].replace(/^\/+/, '');
      bump(name, Math.max(0, end - col));
      covered = end;
    });
    if (!segs.length) covered = 0;
    bump('(wrapper)', Math.max(0, text.length - covered) + 1);
  });
  const total = [...sizes.values()].reduce((a, b) => a + b, 0);
  const brotli = wireBytes(webDir, script).bytes;
  return [...sizes.entries()]
    .map(([source, rawBytes]) => ({ source, rawBytes, estBytes: Math.round((rawBytes / total) * brotli) }))
    .sort((a, b) => b.rawBytes - a.rawBytes);
}

export interface SignInSize {
  files: LoadedFile[];
  bodyBytes: number;
  /** Bodies plus `HEADER_BYTES_PER_RESPONSE` per file: comparable with the bench's coldSignInKb. */
  wireBytes: number;
  wireKb: number;
}

export function signInSize(webDir: string, mapsDir: string): SignInSize {
  const files = signInFiles(webDir, mapsDir);
  const bodyBytes = files.reduce((a, f) => a + f.bytes, 0);
  const wire = bodyBytes + files.length * HEADER_BYTES_PER_RESPONSE;
  return { files, bodyBytes, wireBytes: wire, wireKb: Math.round(wire / 102.4) / 10 };
}

const kb = (b: number) => `${(b / 1024).toFixed(1)} KB`;

/** A readable table of the sign-in load and, per script, its biggest sources. */
export function describeSignIn(webDir: string, mapsDir: string, topModules = 12, byPackage = true): string {
  const s = signInSize(webDir, mapsDir);
  const lines = [
    `cold sign-in ≈ ${kb(s.wireBytes)} (bodies ${kb(s.bodyBytes)} + ${s.files.length} × ${HEADER_BYTES_PER_RESPONSE} B headers)`,
  ];
  for (const f of s.files) {
    lines.push(`  ${kb(f.bytes).padStart(9)}  ${f.label}  (${kb(f.rawBytes)} raw)`);
    if (f.kind !== 'script' || topModules <= 0) continue;
    for (const m of moduleSizes(webDir, mapsDir, f.file, byPackage).slice(0, topModules))
      lines.push(`      ~${kb(m.estBytes).padStart(8)}  ${m.source}  (${kb(m.rawBytes)} raw)`);
  }
  return lines.join('\n');
}

/** What a cold sign-in downloaded when the budget was last looked at: bytes per file, and per source inside scripts. */
export interface SignInBaseline {
  measuredOn: string;
  files: Record<string, number>;
  sources: Record<string, number>;
}

export const BASELINE_FILE = path.join(__dirname, 'web-size-baseline.json');

export function baselineOf(webDir: string, mapsDir: string, measuredOn: string): SignInBaseline {
  const files: Record<string, number> = {};
  const sources: Record<string, number> = {};
  for (const f of signInFiles(webDir, mapsDir)) {
    files[f.label] = f.bytes;
    if (f.kind === 'script') for (const m of moduleSizes(webDir, mapsDir, f.file)) sources[`${f.label}: ${m.source}`] = m.estBytes;
  }
  return { measuredOn, files, sources };
}

/**
 * The files and sources that grew (or are new) against the baseline, biggest growth first: what a
 * failing budget check prints, so the change that pushed sign-in over is named.
 */
export function whatGrew(webDir: string, mapsDir: string, base: SignInBaseline, minBytes = 100): string[] {
  const now = baselineOf(webDir, mapsDir, '');
  const diff = (cur: Record<string, number>, old: Record<string, number>) =>
    Object.entries(cur)
      .map(([k, v]) => ({ k, v, d: v - (old[k] ?? 0), isNew: !(k in old) }))
      .filter((x) => x.d >= minBytes)
      .sort((a, b) => b.d - a.d);
  const line = (x: { k: string; v: number; d: number; isNew: boolean }) => `${x.k}: ${kb(x.v)}${x.isNew ? ' (new)' : ` (+${kb(x.d)})`}`;
  return [
    ...diff(now.files, base.files).map((x) => `file ${line(x)}`),
    ...diff(now.sources, base.sources)
      .slice(0, 25)
      .map((x) => `  in ${line(x)}`),
  ];
}

if (require.main === module) {
  // npm run web-size [-- <export dir> [<maps dir>] [--top N] [--files]]
  const args = process.argv.slice(2);
  const topAt = args.indexOf('--top');
  const top = topAt >= 0 ? Number(args[topAt + 1]) : 12;
  const byPackage = !args.includes('--files');
  const dirs = args.filter((a, i) => !a.startsWith('--') && (topAt < 0 || i !== topAt + 1));
  const root = path.join(__dirname, '..');
  const webDir = path.resolve(dirs[0] ?? path.join(root, 'dist', 'web'));
  const mapsDir = path.resolve(dirs[1] ?? `${webDir}-sourcemaps`);
  console.log(describeSignIn(webDir, mapsDir, top, byPackage));
  if (fs.existsSync(BASELINE_FILE)) {
    const base = JSON.parse(fs.readFileSync(BASELINE_FILE, 'utf8')) as SignInBaseline;
    const grew = whatGrew(webDir, mapsDir, base);
    console.log(`grew since the baseline of ${base.measuredOn}:${grew.length ? `\n${grew.join('\n')}` : ' nothing'}`);
  }
  // --write-baseline: record this export as the baseline the budget test compares against.
  if (args.includes('--write-baseline')) {
    const base = baselineOf(webDir, mapsDir, new Date().toISOString().slice(0, 10));
    fs.writeFileSync(BASELINE_FILE, `${JSON.stringify(base, null, 2)}\n`);
    console.log(`wrote ${path.relative(root, BASELINE_FILE)}`);
  }
}

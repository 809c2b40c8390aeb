/**
 * What the routes load before any dynamic import(): walks the static, non-type imports from every
 * route file in app/ and checks that the heavy libraries are reached only through the lazy kits
 * (components/forms/form-kit.ts, components/charts/chart-kit.ts). The web export puts what two lazy
 * chunks share into the common chunk that loads with sign-in (DEVELOPERS.md), so one stray static
 * import of a schema module brings zod back into every first visit.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';

const ROOT = path.join(__dirname, '..', '..');
const HEAVY = ['zod', 'jstat', 'simple-statistics', 'victory-native', 'victory', 'd3-scale', 'lodash'];

const IMPORT = /(?:^|\n)\s*(import|export)\s+(?!type\b)([^;]*?)\s+from\s+'([^']+)'/g;
const BARE_IMPORT = /(?:^|\n)\s*import\s+'([^']+)'/g;

function resolve(from: string, spec: string): string | null {
  const base = spec.startsWith('@/')
    ? path.join(ROOT, spec.slice(2))
    : spec.startsWith('.')
      ? path.resolve(path.dirname(from), spec)
      : null;
  if (!base) return null;
  for (const c of [base, `${base}.ts`, `${base}.tsx`, path.join(base, 'index.ts'), path.join(base, 'index.tsx')])
    if (fs.existsSync(c) && fs.statSync(c).isFile()) return c;
  return null;
}

/** Every package reached from `entry` by static value imports, with one import path that reaches it. */
function staticReach(entries: string[]): Map<string, string[]> {
  const packages = new Map<string, string[]>();
  const seen = new Set<string>();
  const walk = (file: string, trail: string[]) => {
    if (seen.has(file)) return;
    seen.add(file);
    if (/\.(png|woff2|json)$/.test(file)) return;
    const src = fs.readFileSync(file, 'utf8');
    const specs: string[] = [];
    for (const m of src.matchAll(IMPORT)) {
      // `import { type A, type B } from 'x'` is erased too.
      const names = m[2]
        .replace(/[{}]/g, '')
        .split(',')
        .map((n) => n.trim())
        .filter(Boolean);
      if (names.length && names.every((n) => n.startsWith('type '))) continue;
      specs.push(m[3]);
    }
    for (const m of src.matchAll(BARE_IMPORT)) specs.push(m[1]);
    for (const spec of specs) {
      const here = [...trail, path.relative(ROOT, file)];
      const local = resolve(file, spec);
      if (local) walk(local, here);
      else if (!spec.startsWith('.') && !spec.startsWith('@/')) {
        const pkg = spec.startsWith('@') ? spec.split('/').slice(0, 2).join('/') : spec.split('/')[0];
        if (!packages.has(pkg)) packages.set(pkg, [...here, spec]);
      }
    }
  };
  for (const e of entries) walk(e, []);
  return packages;
}

function routeFiles(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((d) => {
    const p = path.join(dir, d.name);
    return d.isDirectory() ? routeFiles(p) : /\.tsx?$/.test(d.name) ? [p] : [];
  });
}

describe('heavy libraries load only through the lazy kits', () => {
  const routes = routeFiles(path.join(ROOT, 'app'));

  it('finds the route files and follows their imports', () => {
    expect(routes.length).toBeGreaterThan(10);
    // The walker does reach packages (react-native everywhere): a broken walker would pass the check below.
    expect(staticReach(routes).has('react-native')).toBe(true);
  });

  it.each(HEAVY)('%s is not reached from any route without a dynamic import', (pkg) => {
    const trail = staticReach(routes).get(pkg);
    expect(trail ?? null).toBeNull();
  });

  it('the kits themselves reach zod and victory (so the check above means something)', () => {
    const kits = staticReach([path.join(ROOT, 'components/forms/form-kit.ts'), path.join(ROOT, 'components/charts/chart-kit.ts')]);
    expect(kits.has('zod')).toBe(true);
    expect(kits.has('victory-native') || kits.has('victory')).toBe(true);
  });
});

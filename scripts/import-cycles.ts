/**
 * `npm run cycles`: finds import cycles in the node-side TypeScript (server/, shared/, broker/,
 * rig-simulator/), reading imports with the TypeScript parser. Two views:
 *   - module cycles: server/modules/<a> → server/modules/<b> → … → <a>, folders as nodes, every
 *     import counted (type-only too: a cycle of types is still two modules that lean on each other);
 *   - file cycles: strongly connected groups of files over the imports that exist at run time
 *     (`import type` is erased, so `AppContext` naming its typed services is not a load-order cycle).
 * Exits 1 and prints each cycle when there is one. tests/unit/import-cycles.test.ts runs it.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import ts from 'typescript';

export interface CycleReport {
  files: string[][];
  modules: string[][];
}

const ROOT = path.resolve(__dirname, '..');
const DEFAULT_DIRS = ['server', 'shared', 'broker', 'rig-simulator'];

function walk(dir: string, out: string[]): void {
  if (!fs.existsSync(dir)) return;
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    if (e.name === 'node_modules' || e.name.startsWith('.')) continue;
    const p = path.join(dir, e.name);
    if (e.isDirectory()) walk(p, out);
    else if (/\.tsx?$/.test(e.name) && !e.name.endsWith('.d.ts')) out.push(p);
  }
}

/** Every import / re-export / require of a file, with whether it vanishes at run time. */
function importsOf(file: string): Array<{ spec: string; typeOnly: boolean }> {
  const sf = ts.createSourceFile(
    file,
    fs.readFileSync(file, 'utf8'),
    ts.ScriptTarget.Latest,
    false,
    file.endsWith('x') ? ts.ScriptKind.TSX : ts.ScriptKind.TS,
  );
  const out: Array<{ spec: string; typeOnly: boolean }> = [];
  const visit = (node: ts.Node) => {
    if (ts.isImportDeclaration(node) && ts.isStringLiteral(node.moduleSpecifier)) {
      const c = node.importClause;
      const named = c?.namedBindings && ts.isNamedImports(c.namedBindings) ? c.namedBindings.elements : null;
      const typeOnly = !!c && (c.isTypeOnly || (!c.name && !!named && named.length > 0 && named.every((e) => e.isTypeOnly)));
      out.push({ spec: node.moduleSpecifier.text, typeOnly });
    } else if (ts.isExportDeclaration(node) && node.moduleSpecifier && ts.isStringLiteral(node.moduleSpecifier)) {
      const named = node.exportClause && ts.isNamedExports(node.exportClause) ? node.exportClause.elements : null;
      out.push({
        spec: node.moduleSpecifier.text,
        typeOnly: node.isTypeOnly || (!!named && named.length > 0 && named.every((e) => e.isTypeOnly)),
      });
    } else if (
      ts.isImportEqualsDeclaration(node) &&
      ts.isExternalModuleReference(node.moduleReference) &&
      ts.isStringLiteral(node.moduleReference.expression)
    ) {
      out.push({ spec: node.moduleReference.expression.text, typeOnly: node.isTypeOnly });
    } else if (
      ts.isCallExpression(node) &&
      node.arguments.length === 1 &&
      ts.isStringLiteral(node.arguments[0]) &&
      ((ts.isIdentifier(node.expression) && node.expression.text === 'require') || node.expression.kind === ts.SyntaxKind.ImportKeyword)
    ) {
      out.push({ spec: node.arguments[0].text, typeOnly: false });
    }
    ts.forEachChild(node, visit);
  };
  visit(sf);
  return out;
}

function resolveImport(from: string, spec: string): string | null {
  if (!spec.startsWith('.')) return null;
  const base = path.resolve(path.dirname(from), spec);
  for (const c of [base, `${base}.ts`, `${base}.tsx`, path.join(base, 'index.ts'), path.join(base, 'index.tsx')]) {
    if (fs.existsSync(c) && fs.statSync(c).isFile()) return c;
  }
  return null;
}

/** Tarjan's strongly connected components; groups of more than one node (or a self-loop) are cycles. */
function stronglyConnected(graph: Map<string, Set<string>>): string[][] {
  let index = 0;
  const idx = new Map<string, number>();
  const low = new Map<string, number>();
  const stack: string[] = [];
  const on = new Set<string>();
  const out: string[][] = [];
  const visit = (v: string) => {
    idx.set(v, index);
    low.set(v, index++);
    stack.push(v);
    on.add(v);
    for (const w of graph.get(v) ?? []) {
      if (!idx.has(w)) {
        visit(w);
        low.set(v, Math.min(low.get(v)!, low.get(w)!));
      } else if (on.has(w)) low.set(v, Math.min(low.get(v)!, idx.get(w)!));
    }
    if (low.get(v) === idx.get(v)) {
      const group: string[] = [];
      let w: string;
      do {
        w = stack.pop()!;
        on.delete(w);
        group.push(w);
      } while (w !== v);
      if (group.length > 1 || graph.get(v)?.has(v)) out.push(group.sort());
    }
  };
  for (const v of [...graph.keys()].sort()) if (!idx.has(v)) visit(v);
  return out;
}

export function findCycles(root = ROOT, dirs = DEFAULT_DIRS): CycleReport {
  const files: string[] = [];
  for (const d of dirs) walk(path.join(root, d), files);
  const fileGraph = new Map<string, Set<string>>();
  const moduleGraph = new Map<string, Set<string>>();
  const moduleOf = (f: string) => /^server\/modules\/([^/]+)\//.exec(path.relative(root, f).split(path.sep).join('/'))?.[1] ?? null;
  for (const f of files) {
    const rel = path.relative(root, f);
    const deps = new Set<string>();
    const runtimeDeps = new Set<string>();
    for (const imp of importsOf(f)) {
      const to = resolveImport(f, imp.spec);
      if (!to) continue;
      deps.add(path.relative(root, to));
      if (!imp.typeOnly) runtimeDeps.add(path.relative(root, to));
    }
    fileGraph.set(rel, runtimeDeps);
    const m = moduleOf(f);
    if (m) {
      const set = moduleGraph.get(m) ?? new Set<string>();
      for (const d of deps) {
        const dm = moduleOf(path.join(root, d));
        if (dm && dm !== m) set.add(dm);
      }
      moduleGraph.set(m, set);
    }
  }
  return { files: stronglyConnected(fileGraph), modules: stronglyConnected(moduleGraph) };
}

if (require.main === module) {
  const r = findCycles();
  for (const c of r.modules) console.log(`module cycle: ${c.join(' ↔ ')}`);
  for (const c of r.files) console.log(`file cycle: ${c.join(' ↔ ')}`);
  if (r.modules.length || r.files.length) process.exit(1);
  console.log('no import cycles (server/modules folders and files in server, shared, broker, rig-simulator)');
}

/**
 * Functions longer than a limit (default 120 lines) in server/, shared/ and rig-simulator/, longest
 * first: `npm run long-functions [-- --limit N] [folders or files…]`. Read with the TypeScript compiler's
 * parser (no type-check): function declarations, methods, constructors, accessors, and function
 * expressions and arrow functions with a block body. A function's lines run from its first to its
 * last line, nested functions included (a nested one is listed on its own as well).
 * Exit code 0 always: this is a report, not a gate.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import ts from 'typescript';

const ROOT = join(__dirname, '..');

export interface LongFunction {
  file: string;
  name: string;
  line: number;
  lines: number;
}

/** The .ts/.tsx files under a folder (or the file itself). */
function sourceFiles(dir: string, out: string[] = []): string[] {
  if (!statSync(dir).isDirectory()) {
    out.push(dir);
    return out;
  }
  for (const name of readdirSync(dir)) {
    if (name === 'node_modules' || name.startsWith('.')) continue;
    const p = join(dir, name);
    if (statSync(p).isDirectory()) sourceFiles(p, out);
    else if (/\.tsx?$/.test(name) && !name.endsWith('.d.ts')) out.push(p);
  }
  return out;
}

function nameOf(node: ts.Node, sf: ts.SourceFile): string {
  const named = node as ts.Node & { name?: ts.Node };
  if (named.name) {
    const own = named.name.getText(sf);
    const cls =
      ts.isClassElement(node) && node.parent && ts.isClassLike(node.parent) && node.parent.name ? `${node.parent.name.getText(sf)}.` : '';
    return cls + own;
  }
  if (ts.isConstructorDeclaration(node)) return `${(node.parent as ts.ClassLikeDeclaration).name?.getText(sf) ?? '(class)'}.constructor`;
  // `const x = () => {…}`, `x: function () {…}`, `this.x = () => {…}`
  const p = node.parent;
  if (p && (ts.isVariableDeclaration(p) || ts.isPropertyAssignment(p) || ts.isPropertyDeclaration(p))) return p.name.getText(sf);
  if (p && ts.isBinaryExpression(p)) return p.left.getText(sf);
  if (p && ts.isCallExpression(p)) return `(callback of ${p.expression.getText(sf).slice(0, 40)})`;
  return '(anonymous)';
}

export function longFunctions(files: string[], limit: number): LongFunction[] {
  const found: LongFunction[] = [];
  for (const file of files) {
    const sf = ts.createSourceFile(file, readFileSync(file, 'utf8'), ts.ScriptTarget.Latest, true);
    const visit = (node: ts.Node) => {
      const isFn =
        ts.isFunctionDeclaration(node) ||
        ts.isMethodDeclaration(node) ||
        ts.isConstructorDeclaration(node) ||
        ts.isGetAccessorDeclaration(node) ||
        ts.isSetAccessorDeclaration(node) ||
        ts.isFunctionExpression(node) ||
        (ts.isArrowFunction(node) && ts.isBlock(node.body));
      if (isFn && (node as ts.FunctionLikeDeclaration).body) {
        const start = sf.getLineAndCharacterOfPosition(node.getStart(sf)).line;
        const end = sf.getLineAndCharacterOfPosition(node.getEnd()).line;
        const lines = end - start + 1;
        if (lines > limit) found.push({ file: relative(ROOT, file), name: nameOf(node, sf), line: start + 1, lines });
      }
      ts.forEachChild(node, visit);
    };
    visit(sf);
  }
  return found.sort((a, b) => b.lines - a.lines);
}

if (require.main === module) {
  const args = process.argv.slice(2);
  let limit = 120;
  const at = args.indexOf('--limit');
  if (at >= 0) {
    limit = Number(args[at + 1]);
    args.splice(at, 2);
  }
  const folders = args.length ? args : ['server', 'shared', 'rig-simulator'];
  const files = folders.flatMap((f) => sourceFiles(resolve(ROOT, f)));
  const found = longFunctions(files, limit);
  for (const f of found) console.log(`${String(f.lines).padStart(5)}  ${f.file}:${f.line}  ${f.name}`);
  console.log(`${found.length} function(s) over ${limit} lines in ${folders.join(', ')} (${files.length} files)`);
}

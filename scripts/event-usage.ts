/**
 * Who emits and who listens to each in-process event, read from the server's source with the
 * TypeScript parser: every `<something>events.emit|on|once|off|addListener(NAME, …)` call, NAME a
 * constant exported by server/events.ts or a string literal. tests/unit/event-map.test.ts compares
 * the result with the event map (`EmberlotEvents`), so a name with no emitter or no listener fails.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import ts from 'typescript';

export interface EventUse {
  name: string;
  kind: 'emit' | 'listen' | 'off';
  file: string;
  line: number;
}

const METHODS: Record<string, EventUse['kind']> = {
  emit: 'emit',
  on: 'listen',
  once: 'listen',
  addListener: 'listen',
  prependListener: 'listen',
  off: 'off',
  removeListener: 'off',
};

/** `constants` maps an exported constant's name to its value (e.g. ALARM_EVENT → 'alarm'). */
export function eventUses(file: string, text: string, constants: Record<string, string>): EventUse[] {
  const sf = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true, ts.ScriptKind.TS);
  const out: EventUse[] = [];
  const visit = (node: ts.Node) => {
    if (ts.isCallExpression(node) && ts.isPropertyAccessExpression(node.expression) && METHODS[node.expression.name.text]) {
      const target = node.expression.expression.getText(sf);
      if (/(^|\.)events$/.test(target) && node.arguments.length > 0) {
        const arg = node.arguments[0];
        const name = ts.isStringLiteralLike(arg)
          ? arg.text
          : ts.isIdentifier(arg)
            ? (constants[arg.text] ?? `<unknown constant ${arg.text}>`)
            : `<expression ${arg.getText(sf)}>`;
        out.push({
          name,
          kind: METHODS[node.expression.name.text],
          file,
          line: sf.getLineAndCharacterOfPosition(node.getStart(sf)).line + 1,
        });
      }
    }
    ts.forEachChild(node, visit);
  };
  visit(sf);
  return out;
}

/** The names in `interface EmberlotEvents` of server/events.ts, constants resolved. */
export function eventMapNames(eventsFileText: string, constants: Record<string, string>): string[] {
  const sf = ts.createSourceFile('events.ts', eventsFileText, ts.ScriptTarget.Latest, true, ts.ScriptKind.TS);
  const names: string[] = [];
  sf.forEachChild((n) => {
    if (ts.isInterfaceDeclaration(n) && n.name.text === 'EmberlotEvents') {
      for (const m of n.members) {
        const key = m.name;
        if (!key) continue;
        if (ts.isComputedPropertyName(key) && ts.isIdentifier(key.expression))
          names.push(constants[key.expression.text] ?? `<unknown constant ${key.expression.text}>`);
        else if (ts.isStringLiteral(key) || ts.isIdentifier(key)) names.push(key.text);
      }
    }
  });
  return names;
}

export function serverFiles(root: string): string[] {
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
      const p = path.join(dir, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name.endsWith('.ts') && !e.name.endsWith('.d.ts')) out.push(p);
    }
  };
  walk(path.join(root, 'server'));
  return out;
}

/**
 * The project's own lint rules (eslint/rules.mjs) through the real config (eslint.config.mjs):
 * a cast to a contract type and an unfailable `expect(getBy…).toBeTruthy()` are reported; the
 * fixes the rules ask for are not.
 */
import { spawnSync } from 'node:child_process';
import * as path from 'node:path';

const ROOT = path.resolve(__dirname, '../..');

type Message = { ruleId: string | null; line: number };

/** Lints `code` as if it were the file `file` (relative to the repository root). */
function lint(file: string, code: string): Message[] {
  const r = spawnSync(
    process.execPath,
    [path.join(ROOT, 'node_modules/eslint/bin/eslint.js'), '--stdin', '--stdin-filename', file, '--format', 'json'],
    {
      cwd: ROOT,
      input: code,
      encoding: 'utf8',
    },
  );
  if (r.status !== 0 && r.status !== 1) throw new Error(`eslint exited ${r.status}: ${r.stderr}`);
  const [result] = JSON.parse(r.stdout) as Array<{ messages: Message[] }>;
  return result.messages;
}

const linesOf = (messages: Message[], rule: string) => messages.filter((m) => m.ruleId === rule).map((m) => m.line);

test('a type assertion to a contract type is reported; annotation, satisfies and non-contract casts are not', () => {
  const code = [
    "import type { RigCommandBody } from './contracts';", // 1
    "import type { PlanInput } from '../../../shared/schemas/plans';", // 2
    "export const a = { type: 'bias', sockets: [1], on: false } as RigCommandBody;", // 3: cast
    "export const b: RigCommandBody = { type: 'bias', sockets: [1], on: false };", // 4: annotated
    "export const c = { type: 'bias', sockets: [1], on: false } satisfies RigCommandBody;", // 5
    'export const d = JSON.parse("{}") as PlanInput[];', // 6: cast (array of a contract)
    "export const e = JSON.parse('{}') as { plan: PlanInput | null };", // 7: cast (a contract inside a shape)
    "export const f = JSON.parse('{}') as unknown;", // 8
    'export const g = Object.keys({}) as Array<keyof PlanInput>;', // 9: a key, not contract data
    "export const h = <RigCommandBody>JSON.parse('{}');", // 10: angle-bracket cast
  ].join('\n');
  expect(linesOf(lint('server/modules/telemetry/lint-sample.ts', code), 'emberlot/no-contract-cast')).toEqual([3, 6, 7, 10]);
});

test('expect(getBy…(…)).toBeTruthy() and friends are reported in tests; assertions that can fail are not', () => {
  const code = [
    "import { screen } from '@testing-library/react-native';", // 1
    "test('x', async () => {", // 2
    "  expect(screen.getByText('Sign in')).toBeTruthy();", // 3: getBy throws first
    "  expect(await screen.findByText('Saved')).toBeTruthy();", // 4: findBy rejects first
    "  expect(screen.getAllByRole('link')).toBeDefined();", // 5
    "  expect(screen.getByText('Sign in')).not.toBeNull();", // 6
    "  expect(screen.getByText('Sign in')).toBeOnTheScreen();", // 7
    "  expect(screen.queryByText('Gone')).toBeNull();", // 8: queryBy returns null, so this can fail
    "  expect(screen.getByText('Sign in').props.children).toBe('Sign in');", // 9
    '});',
  ].join('\n');
  expect(linesOf(lint('tests/app/lint-sample.test.tsx', code), 'emberlot/no-unfailable-getby')).toEqual([3, 4, 5, 6]);
});

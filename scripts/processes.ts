/**
 * The long-running processes `npm start` (and the e2e run and benchmarks) supervise, in start
 * order. Each line of a process's output is prefixed with its name. waitFor: a line meaning "ready".
 */
import * as fs from 'node:fs';
import * as path from 'node:path';

export interface ProcessSpec {
  name: string;
  command: string[];
  env?: Record<string, string>;
  waitFor?: RegExp;
  devOnly?: boolean;
  /** Only started when this file exists (a part still being built is skipped, not fatal). */
  file?: string;
}

const ROOT = path.resolve(__dirname, '..');
const ts = (file: string) => [process.execPath, '-r', '@swc-node/register', file];

const ALL: ProcessSpec[] = [
  { name: 'mail', command: ts('server/mail-sink/main.ts'), file: 'server/mail-sink/main.ts', waitFor: /listening/i },
  { name: 'broker', command: ts('broker/main.ts'), file: 'broker/main.ts', waitFor: /listening on/ },
  {
    name: 'expo',
    command: [process.execPath, require.resolve('expo/bin/cli'), 'start', '--web', '--port', '8081', '--host', 'localhost'],
    env: { CI: '1', EXPO_NO_TELEMETRY: '1', BROWSER: 'none' },
    devOnly: true,
  },
  // A smaller old-space lets V8 collect before the heap balloons under ingest (bench/README.md:
  // live heap ~110 MB, but ~350 MB between collections at full ingest rate).
  {
    name: 'api',
    command: [process.execPath, '--max-old-space-size=384', '--max-semi-space-size=32', '-r', '@swc-node/register', 'server/main.ts'],
    waitFor: /listening on/,
  },
  {
    name: 'rigs',
    command: [...ts('rig-simulator/main.ts')],
    file: 'rig-simulator/main.ts',
    waitFor: /rig\(s\)/,
  },
];

export const PROCESSES: ProcessSpec[] = ALL.filter((p) => !p.file || fs.existsSync(path.join(ROOT, p.file)));

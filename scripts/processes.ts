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

export interface ClusterPorts {
  brokers: [number, number];
  apis: [number, number];
  redisUrl: string;
}

/**
 * `npm run start:cluster`: the multi-node layout on loopback — two brokers sharing state through
 * Redis, two API processes (each given both brokers, in opposite order; EMBERLOT_WORKERS=elect lets
 * one elected process run ingest, scheduler and protection), the simulator (rigs given both brokers,
 * persistent sessions) and the mail sink. Same specs as `npm start`, per-process env added.
 */
export function clusterProcesses(p: ClusterPorts): ProcessSpec[] {
  const byName = (name: string) => PROCESSES.find((s) => s.name === name);
  const url = (order: number[]) => order.map((port) => `mqtt://127.0.0.1:${port}`).join(',');
  const [a, b] = p.brokers;
  const out: ProcessSpec[] = [];
  const add = (name: string, spec: ProcessSpec | undefined, env: Record<string, string>) => {
    if (spec) out.push({ ...spec, name, env: { ...spec.env, ...env } });
  };
  add('mail', byName('mail'), {});
  add('broker-a', byName('broker'), { EMBERLOT_MQTT_PORT: String(a), EMBERLOT_REDIS_URL: p.redisUrl });
  add('broker-b', byName('broker'), { EMBERLOT_MQTT_PORT: String(b), EMBERLOT_REDIS_URL: p.redisUrl });
  add('api-1', byName('api'), { EMBERLOT_PORT: String(p.apis[0]), EMBERLOT_MQTT_URL: url([a, b]), EMBERLOT_WORKERS: 'elect' });
  add('api-2', byName('api'), { EMBERLOT_PORT: String(p.apis[1]), EMBERLOT_MQTT_URL: url([b, a]), EMBERLOT_WORKERS: 'elect' });
  add('rigs', byName('rigs'), { EMBERLOT_MQTT_URL: url([a, b]), EMBERLOT_MQTT_PERSISTENT: '1' });
  return out;
}

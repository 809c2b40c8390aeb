/**
 * The long-running processes `npm start` supervises, in start order. Each line of a process's
 * output is prefixed with its name. waitFor: a line that means "ready".
 */
export interface ProcessSpec {
  name: string;
  command: string[];
  env?: NodeJS.ProcessEnv;
  waitFor?: RegExp;
  devOnly?: boolean;
}

const ts = (file: string) => [process.execPath, '-r', '@swc-node/register', file];

export const PROCESSES: ProcessSpec[] = [
  {
    name: 'expo',
    command: [process.execPath, require.resolve('expo/bin/cli'), 'start', '--web', '--port', '8081', '--host', 'localhost'],
    env: { CI: '1', EXPO_NO_TELEMETRY: '1', BROWSER: 'none' },
    devOnly: true,
  },
  { name: 'api', command: ts('server/main.ts'), waitFor: /listening on/ },
];

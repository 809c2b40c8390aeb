import { spawn, type ChildProcess } from 'node:child_process';
import * as path from 'node:path';
import { PROJECT_ROOT } from './pg-cluster';
import { PROCESSES, type ProcessSpec } from './processes';

export interface Stack {
  children: Array<{ spec: ProcessSpec; child: ChildProcess }>;
  /** SIGTERM every child (reverse order), SIGKILL what is left after the grace period. */
  stop: (graceMs?: number) => Promise<void>;
}

export interface StackOptions {
  env: NodeJS.ProcessEnv;
  dev?: boolean;
  /** The processes to start (default PROCESSES, the single-machine layout). */
  processes?: ProcessSpec[];
  /** Names to leave out (e.g. the simulator in a benchmark that drives its own rigs). */
  skip?: string[];
  /** Print children's output with a [name] prefix (default true). */
  echo?: boolean;
  onUnexpectedExit?: (name: string, code: number | null, signal: NodeJS.Signals | null) => void;
}

/** Start Emberlot's long-running processes in order, each waiting for its "ready" line. */
export async function startStack(opts: StackOptions): Promise<Stack> {
  const children: Stack['children'] = [];
  let stopping = false;
  const env = { ...opts.env, SWC_NODE_PROJECT: path.join(PROJECT_ROOT, 'server', 'tsconfig.json') };
  const stack: Stack = {
    children,
    stop: async (graceMs = 8000) => {
      stopping = true;
      for (const { child } of [...children].reverse()) if (child.exitCode === null && child.signalCode === null) child.kill('SIGTERM');
      const deadline = Date.now() + graceMs;
      while (children.some(({ child }) => child.exitCode === null && child.signalCode === null) && Date.now() < deadline) {
        await new Promise((r) => setTimeout(r, 50));
      }
      for (const { child } of children) if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
    },
  };
  try {
    for (const spec of opts.processes ?? PROCESSES) {
      if ((spec.devOnly && !opts.dev) || opts.skip?.includes(spec.name)) continue;
      const child = spawn(spec.command[0], spec.command.slice(1), {
        cwd: PROJECT_ROOT,
        env: { ...env, ...spec.env },
        stdio: ['ignore', 'pipe', 'pipe'],
      });
      if (opts.echo !== false) {
        const out = (w: (s: string) => void) => (b: Buffer) =>
          b
            .toString()
            .split('\n')
            .filter(Boolean)
            .forEach((l) => w(`[${spec.name}] ${l}`));
        child.stdout!.on('data', out(console.log));
        child.stderr!.on('data', out(console.error));
      } else {
        child.stdout!.resume();
        child.stderr!.resume();
      }
      child.on('exit', (code, sig) => {
        if (!stopping) opts.onUnexpectedExit?.(spec.name, code, sig);
      });
      children.push({ spec, child });
      if (spec.waitFor) await waitForLine(child, spec.waitFor, spec.name);
    }
  } catch (e) {
    await stack.stop(2000);
    throw e;
  }
  return stack;
}

function waitForLine(child: ChildProcess, re: RegExp, name: string): Promise<void> {
  return new Promise((resolve, reject) => {
    let tail = '';
    const timer = setTimeout(() => reject(new Error(`${name} did not report ready within 90 s`)), 90000);
    const on = (b: Buffer) => {
      tail = (tail + b.toString()).slice(-2000);
      if (re.test(tail)) {
        clearTimeout(timer);
        child.stdout!.off('data', on);
        resolve();
      }
    };
    child.stdout!.on('data', on);
    child.on('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`${name} exited (${code}) before it was ready`));
    });
  });
}

/**
 * CPU time of processes from /proc/<pid>/stat (utime + stime), to say where a scenario's CPU went:
 * the API, the broker, this process (publishers or simulators) and PostgreSQL (every child of
 * the postmaster: backends, WAL writer, checkpointer, autovacuum).
 */
import * as fs from 'node:fs';

const TICKS_PER_S = 100; // USER_HZ on Linux

function statOf(pid: number): { ppid: number; ticks: number } | null {
  try {
    const raw = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
    // The command name may contain spaces: fields start after the last ')'.
    const f = raw.slice(raw.lastIndexOf(')') + 2).split(' ');
    return { ppid: Number(f[1]), ticks: Number(f[11]) + Number(f[12]) };
  } catch {
    return null;
  }
}

function childrenTicks(parent: number): Map<number, number> {
  const out = new Map<number, number>();
  for (const d of fs.readdirSync('/proc')) {
    if (!/^\d+$/.test(d)) continue;
    const s = statOf(Number(d));
    if (s && s.ppid === parent) out.set(Number(d), s.ticks);
  }
  return out;
}

export interface CpuSnapshot {
  at: number;
  procs: Record<string, number>;
  pg: Map<number, number>;
}

export function cpuSnapshot(pids: Record<string, number>, postmaster: number | null): CpuSnapshot {
  const procs: Record<string, number> = {};
  for (const [name, pid] of Object.entries(pids)) procs[name] = statOf(pid)?.ticks ?? 0;
  const pg = postmaster ? childrenTicks(postmaster) : new Map<number, number>();
  if (postmaster) pg.set(postmaster, statOf(postmaster)?.ticks ?? 0);
  return { at: Date.now(), procs, pg };
}

/** Cores used on average between two snapshots, per process (and 'postgres', 'total'). */
export function coresBetween(a: CpuSnapshot, b: CpuSnapshot): Record<string, number> {
  const s = (b.at - a.at) / 1000;
  const out: Record<string, number> = {};
  let total = 0;
  for (const name of Object.keys(b.procs)) {
    const c = (b.procs[name] - (a.procs[name] ?? 0)) / TICKS_PER_S / s;
    out[name] = Math.round(c * 100) / 100;
    total += c;
  }
  let pg = 0;
  for (const [pid, ticks] of b.pg) pg += ticks - (a.pg.get(pid) ?? 0); // backends born in between count from 0
  out.postgres = Math.round((pg / TICKS_PER_S / s) * 100) / 100;
  total += pg / TICKS_PER_S / s;
  out.total = Math.round(total * 100) / 100;
  return out;
}

/** Busy jiffies of the whole machine (every process, ours or not) from /proc/stat. */
export function machineTicks(): { busy: number; at: number } {
  const line = fs.readFileSync('/proc/stat', 'utf8').split('\n')[0].trim().split(/\s+/).slice(1).map(Number);
  const idle = line[3] + (line[4] ?? 0);
  const all = line.slice(0, 8).reduce((a, x) => a + x, 0);
  return { busy: all - idle, at: Date.now() };
}

export function machineCoresBetween(a: { busy: number; at: number }, b: { busy: number; at: number }): number {
  return Math.round(((b.busy - a.busy) / TICKS_PER_S / ((b.at - a.at) / 1000)) * 100) / 100;
}

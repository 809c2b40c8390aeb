/** Resident memory of child processes, sampled from /proc/<pid>/status (VmRSS) every 200 ms. */
import * as fs from 'node:fs';

export function rssKb(pid: number): number | null {
  try {
    const m = /^VmRSS:\s+(\d+)\s+kB/m.exec(fs.readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) : null;
  } catch {
    return null;
  }
}

export class RssSampler {
  private timer: ReturnType<typeof setInterval> | null = null;
  /** Peak kB per name since the last mark(). */
  private peaks = new Map<string, number>();

  constructor(
    private readonly pids: Record<string, number>,
    private readonly everyMs = 200,
  ) {}

  start(): void {
    if (this.timer) return;
    this.sample();
    this.timer = setInterval(() => this.sample(), this.everyMs);
  }

  private sample(): void {
    for (const [name, pid] of Object.entries(this.pids)) {
      const kb = rssKb(pid);
      if (kb !== null && kb > (this.peaks.get(name) ?? 0)) this.peaks.set(name, kb);
    }
  }

  /** Start a new measurement period. */
  mark(): void {
    this.peaks.clear();
    this.sample();
  }

  /** RSS per process now, MB. */
  currentMb(): Record<string, number> {
    const out: Record<string, number> = {};
    for (const [name, pid] of Object.entries(this.pids)) {
      const kb = rssKb(pid);
      if (kb !== null) out[name] = Math.round((kb / 1024) * 10) / 10;
    }
    return out;
  }

  /** Peak RSS per process since mark(), MB. */
  peaksMb(): Record<string, number> {
    this.sample();
    return Object.fromEntries([...this.peaks].map(([k, v]) => [k, Math.round((v / 1024) * 10) / 10]));
  }

  stop(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
  }
}

/**
 * Opt-in periodic memory log of the API process (EMBERLOT_MEMORY_LOG_MS=<ms>): one line per tick,
 * `[api] memory {json}` with rss, V8's heap (total/used), external and array-buffer bytes and the
 * new/old spaces' sizes, in MB. Off by default; used to see where the API's RSS goes under the
 * ingest bench (bench/README.md "Ingest memory").
 */
import * as v8 from 'node:v8';

const MB = 1024 * 1024;
const mb = (n: number) => Math.round((n / MB) * 10) / 10;

export interface MemorySnapshot {
  rss: number;
  heapTotal: number;
  heapUsed: number;
  external: number;
  arrayBuffers: number;
  newSpace: number;
  oldSpace: number;
  otherSpaces: number;
}

/** The process's memory now, in MB. */
export function memorySnapshot(): MemorySnapshot {
  const m = process.memoryUsage();
  let newSpace = 0;
  let oldSpace = 0;
  let otherSpaces = 0;
  for (const s of v8.getHeapSpaceStatistics()) {
    if (s.space_name === 'new_space') newSpace += s.space_size;
    else if (s.space_name === 'old_space') oldSpace += s.space_size;
    else otherSpaces += s.space_size;
  }
  return {
    rss: mb(m.rss),
    heapTotal: mb(m.heapTotal),
    heapUsed: mb(m.heapUsed),
    external: mb(m.external),
    arrayBuffers: mb(m.arrayBuffers),
    newSpace: mb(newSpace),
    oldSpace: mb(oldSpace),
    otherSpaces: mb(otherSpaces),
  };
}

/**
 * Starts the log when `intervalMs` is a positive number; `extra` adds the process's own gauges
 * (queues that hold messages). Returns its stop function.
 */
export function startMemoryLog(
  intervalMs: number,
  extra: () => Record<string, number> = () => ({}),
  write: (line: string) => void = console.log,
): () => void {
  if (!Number.isFinite(intervalMs) || intervalMs <= 0) return () => undefined;
  const timer = setInterval(() => write(`[api] memory ${JSON.stringify({ ...memorySnapshot(), ...extra() })}`), intervalMs);
  (timer as unknown as { unref?: () => void }).unref?.();
  return () => clearInterval(timer);
}

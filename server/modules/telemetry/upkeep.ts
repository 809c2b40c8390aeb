/**
 * Telemetry upkeep (issue #24 item 1): the tiers of shared/domain/telemetry-tiers.ts kept to their
 * windows, run by the telemetry feature at start and every few minutes (`runTelemetryUpkeep`).
 *
 * 1. Day partitions (UTC) of telemetry_batches and telemetry_rollups exist from yesterday to
 *    AHEAD_DAYS ahead; rows that landed in a default partition (a day without one: a rig's late
 *    re-sends after a long outage) move into their day's partition (`telemetry_day_partition`).
 * 2. The hourly tier: every (rig, hour) touched by a message stored since the last run is rebuilt
 *    from the minute rollups (late re-sends included; a margin covers the rollup flush and
 *    transactions in flight).
 * 3. A raw day older than the raw window: the messages within KEEP_AROUND_MIN of each trip, alarm
 *    and read point on the rig are copied into telemetry_kept, then the partition is dropped.
 * 4. A minute day older than the minute window: its hours are rebuilt from it (so the hourly tier
 *    never depends on the last run having caught up), then the partition is dropped.
 * Rows leave only with their partition: nothing is deleted row by row.
 *
 * Why not pg_partman (Debian's postgresql-15-partman, 4.7): its retention drops partitions but
 * has no step to copy the kept windows first, so the drop would still be ours; its maintenance runs
 * from a background worker that needs `shared_preload_libraries` (a server restart and a setting in
 * every cluster: demo, tests, e2e, bench) or from an outside scheduler, and every cluster would need
 * one more Debian package. The whole job is a few statements per day partition, so it runs from
 * the API on node-cron (already the scheduler's job runner), every 5 minutes and once at start.
 * One run at a time per database: a transaction-level advisory lock.
 */
import type { Pool } from 'pg';
import { RECOVERY_MARGIN_MS } from './rollups';
import {
  dayPartitions,
  defaultDays,
  dropPartition,
  ensureDays,
  hourlyFromMinutePartition,
  hourlyWatermark,
  inTransaction,
  keepWindows,
  rebuildTouchedHours,
  type DayPartitioned,
} from './upkeep.data';

/** Day partitions made this many days ahead (the ingest accepts a ts up to 24 h ahead). */
export const AHEAD_DAYS = 3;
/** When the telemetry feature runs the upkeep (node-cron: every 5 minutes). */
export const UPKEEP_CRON = '*/5 * * * *';
const DAY_MS = 86_400_000;

export interface UpkeepOptions {
  rawKeepDays: number;
  minuteKeepDays: number;
  keepAroundMin: number;
}

export interface UpkeepResult {
  created: string[];
  /** Partitions dropped, in order. */
  dropped: string[];
  /** Raw messages copied into telemetry_kept. */
  kept: number;
  /** Hourly rows written. */
  hourly: number;
}

const dayText = (ms: number) => new Date(ms).toISOString().slice(0, 10);

/** One upkeep run; `now` is the clock the windows count from (tests move it ahead). */
export async function runTelemetryUpkeep(pool: Pool, opts: UpkeepOptions, now: Date = new Date()): Promise<UpkeepResult> {
  const result: UpkeepResult = { created: [], dropped: [], kept: 0, hourly: 0 };
  const today = Math.floor(now.getTime() / DAY_MS) * DAY_MS;
  const parents: DayPartitioned[] = ['telemetry_batches', 'telemetry_rollups'];

  // 1. Partitions ahead, and days that landed in a default partition.
  for (const parent of parents) {
    result.created.push(
      ...(await inTransaction(pool, async (c) => {
        const made = await ensureDays(c, parent, dayText(today - DAY_MS), dayText(today + AHEAD_DAYS * DAY_MS));
        for (const day of await defaultDays(c, parent)) made.push(...(await ensureDays(c, parent, day, day)));
        return made;
      })),
    );
  }

  // 2. The hourly tier, from the minute rollups.
  const oldestHour = new Date(today - (opts.minuteKeepDays - 1) * DAY_MS);
  result.hourly += await inTransaction(pool, async (c) => {
    const since = (await hourlyWatermark(c)) ?? now.getTime();
    return rebuildTouchedHours(c, since - RECOVERY_MARGIN_MS, oldestHour);
  });

  // 3. Raw days past the window: kept windows first, then the drop (one transaction per day).
  const rawCut = dayText(today - opts.rawKeepDays * DAY_MS);
  const minuteCut = dayText(today - opts.minuteKeepDays * DAY_MS);
  for (const p of await inTransaction(pool, (c) => dayPartitions(c, 'telemetry_batches'))) {
    if (p.day >= rawCut) continue;
    result.kept += await inTransaction(pool, async (c) => {
      const n = await keepWindows(c, p.name, p.day, opts.keepAroundMin);
      await dropPartition(c, p.name);
      return n;
    });
    result.dropped.push(p.name);
  }
  // 4. Minute days past the window: their hours rebuilt from them, then the drop.
  for (const p of await inTransaction(pool, (c) => dayPartitions(c, 'telemetry_rollups'))) {
    if (p.day >= minuteCut) continue;
    result.hourly += await inTransaction(pool, async (c) => {
      const n = await hourlyFromMinutePartition(c, p.name, p.day);
      await dropPartition(c, p.name);
      return n;
    });
    result.dropped.push(p.name);
  }
  return result;
}

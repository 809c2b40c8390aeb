/**
 * Constraint checks for putting a stress run on a rig (an oven with a board of sockets). Pure: no
 * I/O, times are epoch milliseconds, durations are stress-clock hours. Every refusal is a sentence
 * with its numbers ("Oven OV-04 holds 32 sockets; the plan needs 45.").
 *
 * Rules:
 * - static (any time): rig in service, enough sockets on the board, chamber temperature, bias
 *   voltage and humidity within what the rig can do;
 * - in the run's window: no maintenance; one chamber condition per oven (runs sharing an oven at
 *   the same time need the same set temperature and humidity); the sockets of every run sharing
 *   the oven at the same time fit on its board. Anything else is an overlap and is refused.
 */
import { formatUtc } from '../domain/format';
import { holdWindows, sharingRefusals, type OvenTenant } from './sharing';
import type { RigKind } from '../domain/rig-kinds';
import { chamberRefusals, rigName, type ChamberNeeds } from './chamber';

export interface RigCapability {
  id: string;
  code: string;
  socketCount: number;
  maxTempC: number;
  maxVoltageV: number;
  humidityCapable: boolean;
  maxHumidityPct: number | null;
  /** False once decommissioned. */
  active: boolean;
  online?: boolean;
  /** 'chamber': unbiased plans only, socketCount is its capacity in devices (shared/scheduling/chamber.ts). Absent = 'board'. */
  kind?: RigKind;
  minTempC?: number | null;
  maxPressureKPa?: number | null;
}

/** What a run asks of a rig. */
export interface RunNeeds {
  chamberC: number;
  humidityPct: number | null;
  /** Largest bias voltage the rig must supply (VCB for reverse bias, VCE for powered), or null. */
  biasV: number | null;
  sampleSize: number;
  /** Plan stress hours. */
  durationH: number;
  readPointsH: number[];
  /** An unbiased plan's chamber needs (chamberNeedsOf); absent or null for a socket-biased plan. */
  chamber?: ChamberNeeds | null;
}

/** A run already holding (part of) a rig for a window (an oven tenant of shared/scheduling/sharing.ts). */
export interface Commitment extends OvenTenant {
  runId: string;
  rigId: string;
}

export interface MaintenanceWindow {
  rigId: string;
  startMs: number;
  endMs: number;
  reason: string;
}

export interface TimingOptions {
  /** Wall hours one read point holds the run (cool, measure, re-heat); default 24. */
  holdPerReadPointH: number;
  /** Hours allowed for the first heat-up to the chamber set point; default 2. */
  heatingAllowanceH: number;
  /**
   * Wall milliseconds per stress-clock hour: 3,600,000 for real rigs; the demo simulator runs an
   * accelerated clock (EMBERLOT_CLOCK_RATE stress hours per wall second → 1000 / rate).
   */
  msPerClockH: number;
}

export const DEFAULT_TIMING: TimingOptions = { holdPerReadPointH: 24, heatingAllowanceH: 2, msPerClockH: 3_600_000 };

/** Wall ms per stress-clock hour for a clock rate in stress hours per wall second. */
export function msPerClockHFor(clockRateHPerS: number): number {
  return 1000 / (clockRateHPerS > 0 ? clockRateHPerS : 1);
}

/** Read points that hold the run on the way (after time zero, before the end of stress). */
export function intermediateReadPoints(readPointsH: number[], durationH: number): number[] {
  return [...readPointsH].filter((h) => h > 0 && h < durationH).sort((a, b) => a - b);
}

/**
 * Planned length of a run in clock hours: plan hours + one hold per intermediate read point +
 * the heating allowance. The final read point is measured off the rig, so it holds nothing.
 */
export function runDurationH(
  needs: Pick<RunNeeds, 'durationH' | 'readPointsH'>,
  t: Pick<TimingOptions, 'holdPerReadPointH' | 'heatingAllowanceH'> & Partial<TimingOptions> = DEFAULT_TIMING,
): number {
  return needs.durationH + intermediateReadPoints(needs.readPointsH, needs.durationH).length * t.holdPerReadPointH + t.heatingAllowanceH;
}

export function runDurationMs(needs: Pick<RunNeeds, 'durationH' | 'readPointsH'>, t: TimingOptions = DEFAULT_TIMING): number {
  return Math.round(runDurationH(needs, t) * t.msPerClockH);
}

// ---------------------------------------------------------------------------------------------
// Words

/** A number without trailing noise: 45, 121.25, 0.5. */
export function n(x: number): string {
  return String(+x.toFixed(2));
}

/** "2026-03-02 08:00 UTC" (messages are stored and audited, so they carry their zone): shared/domain/format.ts. */
export const when = (ms: number): string => formatUtc(ms);

// ---------------------------------------------------------------------------------------------
// Static checks

/** Reasons the rig can never take this run (its own limits and the chamber clauses); empty when it can. Callers use rigRefusals. */
export function staticRefusals(rig: RigCapability, needs: RunNeeds): string[] {
  const out: string[] = [];
  const name = rigName(rig);
  const unit = rig.kind === 'chamber' ? 'devices' : 'sockets';
  if (!rig.active) out.push(`${name} is decommissioned and takes no new runs.`);
  out.push(...chamberRefusals(rig, needs.chamber));
  if (needs.sampleSize > rig.socketCount) out.push(`${name} holds ${rig.socketCount} ${unit}; the plan needs ${needs.sampleSize}.`);
  if (needs.chamberC > rig.maxTempC) out.push(`${name} reaches at most ${n(rig.maxTempC)} °C; the plan needs ${n(needs.chamberC)} °C.`);
  if (needs.biasV !== null && needs.biasV > rig.maxVoltageV) {
    out.push(`${name} supplies at most ${n(rig.maxVoltageV)} V of bias; the plan needs ${n(needs.biasV)} V.`);
  }
  if (needs.humidityPct !== null) {
    if (!rig.humidityCapable) out.push(`${name} has no humidity control; the plan needs ${n(needs.humidityPct)} % RH.`);
    else if (rig.maxHumidityPct !== null && needs.humidityPct > rig.maxHumidityPct) {
      out.push(`${name} holds at most ${n(rig.maxHumidityPct)} % RH; the plan needs ${n(needs.humidityPct)} % RH.`);
    }
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// Window checks

const overlaps = (aStart: number, aEnd: number, bStart: number, bEnd: number) => aStart < bEnd && bStart < aEnd;

/**
 * (The window part of rigRefusals.) Conflicts of a window [startMs, endMs) on a rig with maintenance and with the runs already on
 * it (the sharing rule: shared/scheduling/sharing.ts); empty when the window is free. Commitments
 * of other rigs are ignored. `timing` places the run's own read-point holds.
 */
export function windowConflicts(
  rig: RigCapability,
  needs: RunNeeds,
  startMs: number,
  endMs: number,
  commitments: readonly Commitment[],
  maintenance: readonly MaintenanceWindow[],
  timing: TimingOptions = DEFAULT_TIMING,
): string[] {
  const out: string[] = [];
  const name = rigName(rig);
  for (const m of maintenance) {
    if (m.rigId !== rig.id || !overlaps(startMs, endMs, m.startMs, m.endMs)) continue;
    out.push(`${name} is in maintenance from ${when(m.startMs)} to ${when(m.endMs)}${m.reason ? ` (${m.reason})` : ''}.`);
  }
  const tenants = commitments.filter((c) => c.rigId === rig.id);
  out.push(...sharingRefusals(rig, needs, startMs, endMs, holdWindows(startMs, needs, timing), tenants));
  return out;
}

// ---------------------------------------------------------------------------------------------
// The one entry

/** A window on the rig and what else holds the rig then (commitments of other rigs are ignored). */
export interface RigWindow {
  startMs: number;
  endMs: number;
  commitments: readonly Commitment[];
  maintenance: readonly MaintenanceWindow[];
  /** Places the run's own read-point holds; default DEFAULT_TIMING. */
  timing?: TimingOptions;
}

/**
 * The one answer to "can this rig take this run": every reason it cannot, empty when it can. The
 * rig's own limits (in service, sockets or devices, temperature, bias, humidity: staticRefusals)
 * with the chamber clauses (kind of rig, cold limit, pressure: chamber.ts); given a window, also
 * maintenance in it and the oven-sharing rule against the runs on the rig then (sharing.ts).
 * `scope: 'window'` asks only what the window adds, for a run already on the rig (its current
 * slot) or a rig whose own limits were refused or passed just before.
 */
export function rigRefusals(rig: RigCapability, needs: RunNeeds, window?: RigWindow | null, scope: 'all' | 'window' = 'all'): string[] {
  const out = scope === 'all' ? staticRefusals(rig, needs) : [];
  if (window) {
    out.push(
      ...windowConflicts(rig, needs, window.startMs, window.endMs, window.commitments, window.maintenance, window.timing ?? DEFAULT_TIMING),
    );
  }
  return out;
}

export interface Slot {
  startMs: number;
  endMs: number;
  /** Why the run cannot start at `notBefore` (empty when it starts then). */
  delayReasons: string[];
}

/**
 * Earliest start ≥ notBeforeMs where the whole run fits on the rig. The feasible set only changes
 * where a commitment or maintenance window ends, so those instants are the only candidates.
 * Null when a static check refuses the rig.
 */
export function earliestSlot(
  rig: RigCapability,
  needs: RunNeeds,
  notBeforeMs: number,
  commitments: readonly Commitment[],
  maintenance: readonly MaintenanceWindow[],
  timing: TimingOptions = DEFAULT_TIMING,
): Slot | null {
  if (rigRefusals(rig, needs).length) return null;
  const dur = runDurationMs(needs, timing);
  const ends = [
    ...commitments.filter((c) => c.rigId === rig.id).map((c) => c.endMs),
    ...maintenance.filter((m) => m.rigId === rig.id).map((m) => m.endMs),
  ].filter((t) => t > notBeforeMs);
  const candidates = [notBeforeMs, ...[...new Set(ends)].sort((a, b) => a - b)];
  const at = (startMs: number) => rigRefusals(rig, needs, { startMs, endMs: startMs + dur, commitments, maintenance, timing }, 'window');
  const delayReasons = at(notBeforeMs);
  for (const t of candidates) {
    if (!at(t).length) {
      return { startMs: t, endMs: t + dur, delayReasons: t === notBeforeMs ? [] : delayReasons };
    }
  }
  // Unreachable: after the last end nothing is left on the rig.
  return null;
}

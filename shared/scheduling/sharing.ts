/**
 * The one rule for sharing an oven (issue #26 item 2), reached through rigRefusals (constraints.ts). Proposals (earliestSlot),
 * booking (runs.service bookingWindow), re-planning (planSchedule) and
 * the start permit's chamber check all decide sharing here, so a proposal is always bookable.
 * Pure and small, so other run kinds can add a clause.
 *
 * Runs may share an oven at the same time only when
 * 1. the chamber condition is the same: the set point the controller is aimed at (the middle of the
 *    plan's band, chamberSetpointC) within SETPOINT_MATCH_C, and the same humidity (or none) — one
 *    oven has one set point;
 * 2. the board has the sockets: the peak of sockets in use by the runs overlapping the window plus
 *    the new run's sample fits the rig's socket count;
 * 3. their read-point holds are compatible: a hold cools the whole chamber, and while another run
 *    still needs the oven hot the hold waits under bias with no hours credited (shared/holds,
 *    "oven-shared"). So every intermediate read-point hold of one run that falls while the other
 *    is in the oven must overlap a hold of the other (the runs hold together); otherwise the plan
 *    could not be kept and the booked windows would be wrong.
 */
import type { RunNeeds, TimingOptions } from './constraints';
import { formatUtc } from '../domain/format';
import type { RigKind } from '../domain/rig-kinds';
import { rigName } from './chamber';

/** Two set points within this are one (the scheduler's own "set point reached" test, scheduler.ts). */
export const SETPOINT_MATCH_C = 0.05;

export interface HoldWindow {
  startMs: number;
  endMs: number;
}

/** A run in (or booked into) an oven over a window, as the sharing rule sees it. */
export interface OvenTenant {
  code: string;
  startMs: number;
  endMs: number;
  chamberC: number;
  humidityPct: number | null;
  sockets: number;
  /** Its read-point holds ahead (wall windows); omitted = none. */
  holds?: readonly HoldWindow[];
  /** A cycling chamber's profile (ChamberNeeds.profileKey): runs share one only on the same profile. */
  profileKey?: string | null;
}

export interface ChamberCondition {
  chamberC: number;
  humidityPct: number | null;
}

export function sameChamberCondition(a: ChamberCondition, b: ChamberCondition): boolean {
  return Math.abs(a.chamberC - b.chamberC) <= SETPOINT_MATCH_C && (a.humidityPct ?? null) === (b.humidityPct ?? null);
}

const num = (x: number) => String(+x.toFixed(2));
const conditionText = (c: ChamberCondition) =>
  c.humidityPct === null ? `${num(c.chamberC)} °C` : `${num(c.chamberC)} °C / ${num(c.humidityPct)} % RH`;
const overlaps = (aStart: number, aEnd: number, bStart: number, bEnd: number) => aStart < bEnd && bStart < aEnd;

/** Read points that hold the run on the way (after time zero, before the end of stress). */
function intermediate(readPointsH: readonly number[], durationH: number): number[] {
  return [...readPointsH].filter((h) => h > 0 && h < durationH).sort((a, b) => a - b);
}

/**
 * The wall windows of a run's intermediate read-point holds when it starts at startMs with `doneH`
 * stress hours already credited: heating first (`heating`), then stress to each read point, each
 * hold lasting holdPerReadPointH. `holdingNow` puts a hold first (a run in read-hold).
 */
export function holdWindows(
  startMs: number,
  needs: Pick<RunNeeds, 'durationH' | 'readPointsH'>,
  t: TimingOptions,
  opts: { doneH?: number; heating?: boolean; holdingNow?: boolean } = {},
): HoldWindow[] {
  const doneH = opts.doneH ?? 0;
  const hold = t.holdPerReadPointH * t.msPerClockH;
  const out: HoldWindow[] = [];
  let at = startMs;
  if (opts.holdingNow) {
    out.push({ startMs: at, endMs: at + hold });
    at += hold;
  }
  if (opts.heating ?? true) at += t.heatingAllowanceH * t.msPerClockH;
  let lastH = doneH;
  for (const h of intermediate(needs.readPointsH, needs.durationH).filter((x) => x > doneH)) {
    at += (h - lastH) * t.msPerClockH;
    out.push({ startMs: at, endMs: at + hold });
    at += hold;
    lastH = h;
  }
  return out;
}

/** A hold of `a` that falls while `b` is in the oven and that no hold of `b` overlaps; null when none. */
function strandedHold(a: readonly HoldWindow[], b: OvenTenant): HoldWindow | null {
  const bHolds = b.holds ?? [];
  for (const h of a) {
    if (!overlaps(h.startMs, h.endMs, b.startMs, b.endMs)) continue;
    // A hold that begins after b has left, or b's own end inside the hold, leaves the oven free to cool.
    if (h.startMs >= b.endMs || b.endMs <= h.endMs) continue;
    if (!bHolds.some((x) => overlaps(h.startMs, h.endMs, x.startMs, x.endMs))) return h;
  }
  return null;
}

/**
 * Why a run (needs, over [startMs, endMs), with its holds) cannot share the oven with `tenants`
 * (the runs holding this rig's windows); empty when it can.
 */
export function sharingRefusals(
  rig: { code: string; socketCount: number; kind?: RigKind },
  needs: Pick<RunNeeds, 'chamberC' | 'humidityPct' | 'sampleSize' | 'chamber'>,
  startMs: number,
  endMs: number,
  holds: readonly HoldWindow[],
  tenants: readonly OvenTenant[],
): string[] {
  const out: string[] = [];
  const name = rigName(rig);
  // A chamber's capacity is in devices (load positions), an oven's in biased sockets.
  const unit = rig.kind === 'chamber' ? 'devices' : 'sockets';
  const profile = needs.chamber?.profileKey ?? null;
  const sharing = tenants.filter((c) => overlaps(startMs, endMs, c.startMs, c.endMs));
  // 1. One chamber condition (and, in a cycling chamber, one temperature profile).
  for (const c of sharing) {
    if (!sameChamberCondition(c, needs)) {
      out.push(`${name} runs ${c.code} at ${conditionText(c)} until ${formatUtc(c.endMs)}; the plan needs ${conditionText(needs)}.`);
    } else if ((c.profileKey ?? null) !== profile) {
      out.push(
        `${name} cycles ${c.code} on another profile until ${formatUtc(c.endMs)}; runs share a cycling chamber only on the same profile.`,
      );
    }
  }
  const same = sharing.filter((c) => sameChamberCondition(c, needs) && (c.profileKey ?? null) === profile);
  // 2. Sockets: the peak use of the board by the runs overlapping the window (sweep over their starts).
  if (same.length) {
    let peak = 0;
    let peakRuns: OvenTenant[] = [];
    const points = [startMs, ...same.map((c) => c.startMs).filter((t) => t > startMs && t < endMs)];
    for (const t of points) {
      const at = same.filter((c) => c.startMs <= t && t < c.endMs);
      const used = at.reduce((s, c) => s + c.sockets, 0);
      if (used > peak) {
        peak = used;
        peakRuns = at;
      }
    }
    if (peak + needs.sampleSize > rig.socketCount) {
      const until = Math.max(...peakRuns.map((c) => c.endMs));
      const who = peakRuns.map((c) => `${c.code} uses ${c.sockets}`).join(', ');
      out.push(
        `${name} has ${rig.socketCount - peak} of ${rig.socketCount} ${unit} free until ${formatUtc(until)} (${who}); the plan needs ${needs.sampleSize}.`,
      );
    }
  }
  // 3. Read-point holds together.
  const self: OvenTenant = { code: 'this run', startMs, endMs, ...needs, sockets: needs.sampleSize, holds };
  for (const c of same) {
    const mine = strandedHold(holds, c);
    if (mine) {
      out.push(
        `${name}: this run would hold for a read point at ${formatUtc(mine.startMs)} while ${c.code} still needs the oven hot; runs sharing an oven must hold their read points together.`,
      );
      continue;
    }
    const theirs = strandedHold(c.holds ?? [], self);
    if (theirs) {
      out.push(
        `${name}: ${c.code} holds for a read point at ${formatUtc(theirs.startMs)} while this run would still need the oven hot; runs sharing an oven must hold their read points together.`,
      );
    }
  }
  return out;
}

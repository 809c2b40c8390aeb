/**
 * Intermittent operating life (power cycling) in cycles, not hours — the rules declared once.
 *
 * A cycling plan (`iol`, MIL-STD-750 method 1037) switches power on for `onMin` and off for
 * `offMin`; each completed cycle swings the junction by ΔTj, which the rig measures from a
 * temperature-sensitive parameter (shared/physics/tsp.ts). A cycle counts toward the run when its
 * swing lies within the plan's ΔTj band, the chamber held and the socket was biased, not tripped.
 * The run's read points and its end are counted in cycles.
 *
 * The rig reports per socket, in every telemetry message: `cycles`, its counter of completed
 * cycles since it booted, and `dTjLowC` / `dTjHighC`, the smallest and largest swing of the cycles
 * completed since its previous message (null when none completed). The cycles of an interval all
 * lie within the band exactly when the smallest and the largest do; when some do and some do not,
 * the interval cannot say how many did, and none is counted (a missing cycle is safer than a
 * credited one that may not have happened).
 */
import type { PlanKind } from '../domain/stress';
import { isCyclingKind } from '../domain/stress';

/**
 * ΔTj band of a cycle: the planned swing is a minimum [pub: MIL-STD-750 method 1037 as used by
 * AEC-Q101: ΔTj ≥ 100 °C], so the band starts at it; a swing more than this many kelvin above
 * the plan is over-stress and not credited either (chosen here, common practice: a cycling rig
 * holds its swing within a few kelvin of the target).
 */
export const CYCLE_DELTA_TJ_OVER_K = 25;

export interface CycleBand {
  lowC: number;
  highC: number;
}

/** The ΔTj band within which a completed cycle counts. */
export function cycleBand(deltaTjC: number): CycleBand {
  return { lowC: deltaTjC, highC: deltaTjC + CYCLE_DELTA_TJ_OVER_K };
}

export interface PlanCycle {
  onMin: number;
  offMin: number;
  deltaTjC: number;
  cycles: number;
}

/** Whether a plan's run is counted in cycles (a cycling kind with its cycle settings). */
export function countsCycles(plan: { kind: PlanKind; cycle: PlanCycle | null }): plan is { kind: PlanKind; cycle: PlanCycle } {
  return isCyclingKind(plan.kind) && plan.cycle !== null;
}

/**
 * A read point given in hours, as a cycle count: the plan's hours map onto its cycles in
 * proportion (durationH ↔ cycle.cycles; a template sets durationH = cycles × (on + off)), rounded
 * to a whole cycle. The end of a cycling run is its cycle target.
 */
export function readPointCycles(plan: { durationH: number; cycle: PlanCycle }, readPointH: number): number {
  if (readPointH >= plan.durationH) return plan.cycle.cycles;
  return Math.round((plan.cycle.cycles * readPointH) / plan.durationH);
}

/** The on/off timing a bias command carries for a cycling plan (stress-clock seconds), or null. */
export function planCycleCommand(plan: {
  kind: PlanKind;
  cycle: PlanCycle | null;
}): { onS: number; offS: number; deltaTjC: number } | null {
  if (!countsCycles(plan)) return null;
  return { onS: plan.cycle.onMin * 60, offS: plan.cycle.offMin * 60, deltaTjC: plan.cycle.deltaTjC };
}

/** One socket's cycle report in a telemetry message. */
export interface SocketCycleReport {
  cycles: number;
  dTjLowC: number | null;
  dTjHighC: number | null;
}

export interface IntervalCycles {
  /** Cycles the rig completed between the two messages (0 after a counter reset). */
  completed: number;
  /** Of those, the ones credited (all of them or none, see the module's note). */
  counted: number;
}

/**
 * Cycles of one socket between two consecutive messages. A counter that went back (the rig
 * rebooted) or a message without a report credits nothing; the later message is the new base.
 */
export function intervalCycles(prev: SocketCycleReport | undefined, cur: SocketCycleReport | undefined, band: CycleBand): IntervalCycles {
  if (!prev || !cur) return { completed: 0, counted: 0 };
  const completed = cur.cycles - prev.cycles;
  if (!(completed > 0)) return { completed: 0, counted: 0 };
  const lo = cur.dTjLowC;
  const hi = cur.dTjHighC;
  const inBand = lo !== null && hi !== null && lo >= band.lowC && hi <= band.highC;
  return { completed, counted: inBand ? completed : 0 };
}

/** The part of a socket sample the cycle rule reads. */
export interface CycleSocketSample {
  socket: number;
  biasOn: boolean;
  tripped: boolean;
  cycle?: SocketCycleReport;
}

export interface CycleIntervalAccrual {
  /** Per run socket: cycles completed and credited in the interval (only sockets that completed any). */
  sockets: Map<number, IntervalCycles>;
  /**
   * Cycles the run's count advances by: the most any one socket had credited (the run counts its
   * cycling program; a socket that fell behind keeps its own, lower count). Zero when every socket
   * is off — an intermittent run never advances on the chamber clock alone.
   */
  run: number;
}

/**
 * Cycle accrual of the interval between two consecutive messages (the caller has checked the
 * seq is consecutive and the chamber held at both ends). Per socket: the cycling program on
 * (biasOn) and not tripped at both ends, not latched, and the cycles' swings within the band.
 */
export function accrueCycleInterval(
  prev: readonly CycleSocketSample[],
  cur: readonly CycleSocketSample[],
  chamberHeld: boolean,
  runSockets: readonly number[],
  latched: ReadonlySet<number>,
  band: CycleBand,
): CycleIntervalAccrual {
  const sockets = new Map<number, IntervalCycles>();
  let run = 0;
  const before = new Map(prev.map((s) => [s.socket, s]));
  const after = new Map(cur.map((s) => [s.socket, s]));
  for (const k of runSockets) {
    const a = before.get(k);
    const b = after.get(k);
    const ic = intervalCycles(a?.cycle, b?.cycle, band);
    if (ic.completed === 0) continue;
    const eligible = chamberHeld && !latched.has(k) && !!a && !!b && a.biasOn && b.biasOn && !a.tripped && !b.tripped;
    const counted = eligible ? ic.counted : 0;
    sockets.set(k, { completed: ic.completed, counted });
    if (counted > run) run = counted;
  }
  return { sockets, run };
}

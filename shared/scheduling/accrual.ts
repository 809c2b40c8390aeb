/**
 * Stress-hour accrual from consecutive telemetry samples. Pure. Hours come from the rig's stress
 * clock (monotonic seconds since the rig booted; accelerated in the demo), never from wall time.
 *
 * An interval between two consecutive samples (seq n → n + 1) counts when the conditions held at
 * both ends:
 * - the chamber within the plan's band in kelvin around its stress temperature (a minimum with a
 *   one-sided band for HTRB: set 150 °C, +5/−0 K → 150–155 °C; shared/domain/standards.ts), and
 *   for humidity plans the humidity within ±5 % RH of set
 *   [memory: JESD22-A101, 85 °C / 85 ± 5 % RH];
 * - per socket: bias on, not tripped, and the bias voltage within the plan's tolerance.
 * The run's own clock counts when the chamber held and at least one of its sockets counted (for
 * intermittent operating life, where bias cycles off by design, the chamber alone).
 * A clock that goes backwards (rig reboot), a missing seq in between (unknown conditions) or no
 * earlier sample accrues nothing; the sample then becomes the new starting point.
 * Once a socket has tripped it stays out for the rest of the run (latched).
 */

import { HUMIDITY_TOLERANCE_RH, chamberLimits, type ChamberBandK } from '../domain/standards';

export { HUMIDITY_TOLERANCE_RH };

export interface Band {
  lowC: number;
  highC: number;
}

/** Allowed chamber range: set − belowK … set + aboveK (°C). */
export function chamberBand(setC: number, band: ChamberBandK): Band {
  return chamberLimits(setC, band);
}

export function chamberWithinBand(chamberC: number, setC: number, band: ChamberBandK): boolean {
  const b = chamberBand(setC, band);
  return chamberC >= b.lowC && chamberC <= b.highC;
}

export interface AccrualConditions {
  setC: number;
  /** The plan's chamber band (K below / above setC). */
  band: ChamberBandK;
  humidityPct: number | null;
  /** Bias voltage magnitude the sockets should show, or null to check bias on/off only. */
  biasV: number | null;
  /** ± percent of biasV. */
  biasTolerancePct: number;
  /** False for intermittent operating life: the run clock needs the chamber only. */
  runNeedsBiasedSocket: boolean;
}

export interface SocketSample {
  socket: number;
  vV: number;
  biasOn: boolean;
  tripped: boolean;
  /** Case (socket) temperature and current, for the junction estimate behind equivalent hours. */
  caseC?: number;
  iA?: number;
}

export interface ClockSample {
  seq: number;
  clockS: number;
  chamberC: number;
  humidityPct: number | null;
  /** Readings of the run's sockets (others are ignored). */
  sockets: SocketSample[];
}

export function conditionsHeld(s: Pick<ClockSample, 'chamberC' | 'humidityPct'>, c: AccrualConditions): boolean {
  if (!chamberWithinBand(s.chamberC, c.setC, c.band)) return false;
  if (c.humidityPct !== null) {
    if (s.humidityPct === null || Math.abs(s.humidityPct - c.humidityPct) > HUMIDITY_TOLERANCE_RH) return false;
  }
  return true;
}

export function socketBiased(s: SocketSample | undefined, c: AccrualConditions): boolean {
  if (!s || !s.biasOn || s.tripped) return false;
  if (c.biasV === null || c.biasV === 0) return true;
  return Math.abs(Math.abs(s.vV) - c.biasV) <= (c.biasV * c.biasTolerancePct) / 100;
}

export interface IntervalAccrual {
  /** Clock seconds between the samples (0 on a reboot or a gap). */
  dtS: number;
  runS: number;
  socketS: Map<number, number>;
  chamberHeld: boolean;
  reboot: boolean;
  gap: boolean;
  /** Sockets seen tripped in the later sample. */
  newlyTripped: number[];
}

/** Accrual of the interval prev → cur for the given sockets; `latched` (tripped earlier) accrue nothing. */
export function accrueInterval(
  prev: ClockSample | null,
  cur: ClockSample,
  c: AccrualConditions,
  runSockets: readonly number[],
  latched: ReadonlySet<number> = new Set(),
): IntervalAccrual {
  const newlyTripped = cur.sockets.filter((s) => s.tripped && !latched.has(s.socket) && runSockets.includes(s.socket)).map((s) => s.socket);
  const none = (extra: Partial<IntervalAccrual>): IntervalAccrual => ({
    dtS: 0,
    runS: 0,
    socketS: new Map(),
    chamberHeld: false,
    reboot: false,
    gap: false,
    newlyTripped,
    ...extra,
  });
  if (!prev) return none({});
  if (cur.seq !== prev.seq + 1) return none({ gap: true });
  const dtS = cur.clockS - prev.clockS;
  if (dtS < 0) return none({ reboot: true });
  if (dtS === 0) return none({});
  const chamberHeld = conditionsHeld(prev, c) && conditionsHeld(cur, c);
  const socketS = new Map<number, number>();
  if (chamberHeld) {
    const before = new Map(prev.sockets.map((s) => [s.socket, s]));
    const after = new Map(cur.sockets.map((s) => [s.socket, s]));
    for (const k of runSockets) {
      if (latched.has(k) || newlyTripped.includes(k)) continue;
      if (socketBiased(before.get(k), c) && socketBiased(after.get(k), c)) socketS.set(k, dtS);
    }
  }
  const runCounts = chamberHeld && (!c.runNeedsBiasedSocket || runSockets.length === 0 || socketS.size > 0);
  return { dtS, runS: runCounts ? dtS : 0, socketS, chamberHeld, reboot: false, gap: false, newlyTripped };
}

/**
 * Stress hours are sums of float intervals (0.1 h ten times is 0.9999999999999999 h), so a target
 * counts as reached within this much: 1e-9 h = 3.6 µs, far below any sample interval. Without it a
 * run reaching its read point or its end exactly on a sample stopped one sample late.
 */
export const HOURS_EPS = 1e-9;

/** Has `hours` reached `targetH` (within HOURS_EPS)? */
export function reachedH(hours: number, targetH: number): boolean {
  return hours >= targetH - HOURS_EPS;
}

export interface SeriesAccrual {
  runH: number;
  socketH: Record<number, number>;
  tripped: number[];
  last: ClockSample | null;
}

/**
 * Accrual over a series of samples in seq order, continuing from `start` (hours so far, the last
 * sample already counted, sockets already tripped). Hours are added interval by interval, in
 * order, so accruing a series in pieces gives exactly the same total as all at once.
 */
export function accrueSeries(
  samples: readonly ClockSample[],
  c: AccrualConditions,
  runSockets: readonly number[],
  start: { runH?: number; socketH?: Record<number, number>; last?: ClockSample | null; tripped?: number[] } = {},
): SeriesAccrual {
  let runH = start.runH ?? 0;
  const socketH: Record<number, number> = { ...(start.socketH ?? {}) };
  for (const k of runSockets) socketH[k] ??= 0;
  const latched = new Set(start.tripped ?? []);
  let prev = start.last ?? null;
  for (const cur of samples) {
    const r = accrueInterval(prev, cur, c, runSockets, latched);
    runH += r.runS / 3600;
    for (const [k, s] of r.socketS) socketH[k] += s / 3600;
    for (const k of r.newlyTripped) latched.add(k);
    prev = cur;
  }
  return { runH, socketH, tripped: [...latched].sort((a, b) => a - b), last: prev };
}

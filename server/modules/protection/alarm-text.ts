/**
 * What protection tells the operator: each alarm's title, message, action and numbers, built from
 * the judge's verdicts (judge.ts). Pure functions: no I/O, no state. The actions defer to the rig's
 * hardware interlocks and the lab's own safety rules.
 */
import type { ProtectionDevice, SocketAssessment, SocketSample } from '../../../shared/safety/protection';
import type { RaiseAlarmInput } from '../alarms/alarms.service';
import type { AmbientOut, BiasOff, LeakageJump } from './judge';
import type { RunContext } from './run-context';
import { commandErrorWords } from '../alarms/command-words';

export const TRIP_ACTION =
  "Leave the socket de-energised; check heat sinking and bias before a reset; the rig's hardware interlocks remain the primary protection.";
/** The one instruction when the rig did not confirm a trip: the socket may still be energised. */
export const tripUnconfirmedAction = (socket: number, rigCode: string) =>
  `Remove bias from socket ${socket} at ${rigCode} now with the rig's own controls and keep it off; do not open a hot or energised oven. Once it is off, check heat sinking and bias before a reset. The rig's hardware interlocks remain the primary protection.`;
export const WARN_ACTION =
  "Watch this socket and check its heat sinking (clamp, pad, airflow) and bias. Emberlot trips it if the junction keeps heading for its rating; the rig's hardware interlocks remain the primary protection.";
export const OFFLINE_ACTION =
  "Check the rig's controller and network connection. Until it reconnects Emberlot cannot see or trip its sockets; its hardware interlocks still protect the devices. Do not open a hot or energised oven to look.";
export const AMBIENT_ACTION =
  'Check the oven door, its controller and its set point. Stress time outside the band may not count toward the run.';
export const BIAS_ACTION =
  'Check the bias supply, the socket contact and the wiring. The device is not stressed as planned while this lasts.';
export const LEAKAGE_ACTION =
  'The device may be degrading or breaking down. Watch its current; if it keeps climbing, remove bias from the socket and note the device for failure analysis.';

export const f1 = (x: number | null | undefined) =>
  x === null || x === undefined || !Number.isFinite(x) ? 'n/a' : (Math.round(x * 10) / 10).toFixed(1);
export const round = (x: number | null, digits = 3) => (x === null || !Number.isFinite(x) ? null : Number(x.toFixed(digits)));
export const clip = (s: string, n: number) => (s.length > n ? s.slice(0, n - 1) + '…' : s);

/** A quantity with its unit; currents scaled to nA, µA, mA or A. */
export function fmtUnit(x: number, unit: string): string {
  const a = Math.abs(x);
  if (unit === 'A') {
    if (a === 0) return '0 A';
    if (a < 1e-6) return `${(x * 1e9).toPrecision(3)} nA`;
    if (a < 1e-3) return `${(x * 1e6).toPrecision(3)} µA`;
    if (a < 1) return `${(x * 1e3).toPrecision(3)} mA`;
    return `${x.toPrecision(3)} A`;
  }
  return `${Number(x.toPrecision(4))} ${unit}`;
}

/** The runaway numbers in a sentence: junction against rating, loop gain, time to Tj max. */
export function numbersText(a: SocketAssessment, d: ProtectionDevice): string {
  const parts = [`Junction estimate ${f1(a.tjC)} °C against a rating of ${f1(d.tjMaxC)} °C`];
  parts.push(a.loopGain === null ? 'loop gain not resolved yet' : `loop gain ${a.loopGain.toFixed(2)}`);
  parts.push(a.secondsToTjMax === null ? 'no projection to Tj max' : `Tj max projected in ${Math.round(a.secondsToTjMax)} s at this trend`);
  return parts.join('; ') + '.';
}

export function assessmentDetails(
  a: SocketAssessment,
  d: ProtectionDevice,
  s: SocketSample,
  serial: string | null,
): Record<string, unknown> {
  return {
    tjC: round(a.tjC, 2),
    tjMaxC: d.tjMaxC,
    marginC: a.tjC === null ? null : round(d.tjMaxC - a.tjC, 2),
    loopGain: round(a.loopGain, 3),
    secondsToTjMax: round(a.secondsToTjMax, 1),
    slopeCPerS: round(a.slopeCPerS, 4),
    thetaCaCPerW: round(a.thetaCaCPerW, 3),
    // Which θca the loop gain used: protection's window fit or the socket's identified one (server/modules/thermal).
    thetaCaSource: a.thetaCaSource ?? 'none',
    thetaJcCPerW: d.thetaJcCPerW,
    caseC: s.caseC,
    chamberC: s.chamberC,
    vV: s.vV,
    iA: s.iA,
    powerW: round(s.vV * s.iA, 3),
    stressClockS: s.tS,
    deviceSerial: serial,
    reason: a.reason,
  };
}

/** Where the rig and socket are, for messages. */
export interface SocketPlace {
  rigId: string;
  rigCode: string;
  socket: number;
}

export function runawayWarningAlarm(
  p: SocketPlace,
  runId: string | null,
  a: SocketAssessment,
  device: ProtectionDevice,
  sample: SocketSample,
  serial: string | null,
): RaiseAlarmInput {
  return {
    kind: 'runaway-warning',
    severity: 'warning',
    rigId: p.rigId,
    runId,
    socketIndex: p.socket,
    title: `Socket ${p.socket} on ${p.rigCode}: runaway risk`,
    message: `${a.reason}. ${numbersText(a, device)}`,
    action: WARN_ACTION,
    details: assessmentDetails(a, device, sample, serial),
  };
}

/** The reason sent with the trip command (the rig keeps at most 200 characters). */
export const tripCommandReason = (a: SocketAssessment) => clip(`Emberlot protection: ${a.reason}`, 200);

/** The reason stored on the run socket. */
export const tripRecordReason = (a: SocketAssessment) => clip(a.reason, 1000);

/**
 * A trip's alarm before the rig answered, and its message once it did (tripOutcome). `baseMessage`
 * is "<where>: <reason>. <numbers>"; each outcome says in its own words what happened to the bias.
 */
export interface TripAlarm {
  input: RaiseAlarmInput;
  baseMessage: string;
  rigCode: string;
}

const SENT = 'Emberlot is removing bias from ';
const DONE = 'Emberlot removed bias from ';
const TRIED = 'Emberlot sent a trip to ';
const NOT_CONFIRMED = ' The rig did not confirm the trip';

export function tripAlarm(
  p: SocketPlace,
  run: { runId: string | null; runCode: string | null },
  cmdId: string,
  a: SocketAssessment,
  device: ProtectionDevice,
  sample: SocketSample,
  serial: string | null,
): TripAlarm {
  const { rigCode, socket } = p;
  const details = { ...assessmentDetails(a, device, sample, serial), cmdId, command: 'sent' };
  const where = `socket ${socket} on ${rigCode}${serial ? ` (device ${serial}` + (run.runCode ? `, run ${run.runCode})` : ')') : run.runCode ? ` (run ${run.runCode})` : ''}`;
  const baseMessage = `${where}: ${a.reason}. ${numbersText(a, device)}`;
  return {
    baseMessage,
    rigCode,
    input: {
      kind: 'runaway-trip',
      severity: 'critical',
      rigId: p.rigId,
      runId: run.runId,
      socketIndex: socket,
      title: `Socket ${socket} on ${rigCode} tripped: runaway`,
      message: SENT + baseMessage,
      action: TRIP_ACTION,
      details,
    },
  };
}

/**
 * The trip alarm once the rig confirmed the command, or did not. Not confirmed, message and action
 * give one instruction (remove bias at the rig now: the socket may still be energised), with the
 * failure in words, never the command's internal id.
 */
export function tripOutcome(trip: TripAlarm, outcome: { ok: true } | { ok: false; error: string }): RaiseAlarmInput {
  const { input } = trip;
  const socket = input.socketIndex ?? 0;
  const message = outcome.ok
    ? `${DONE}${trip.baseMessage} The rig confirmed the trip.`
    : `${TRIED}${trip.baseMessage}${NOT_CONFIRMED} (${commandErrorWords(outcome.error)}), so the socket may still be energised.`;
  return {
    ...input,
    message,
    action: outcome.ok ? TRIP_ACTION : tripUnconfirmedAction(socket, trip.rigCode),
    details: {
      ...input.details,
      command: outcome.ok ? 'confirmed' : 'not confirmed',
      commandError: outcome.ok ? null : outcome.error,
    },
  };
}

/** An earlier trip alarm's message once a resent command was confirmed (its action: TRIP_ACTION again). */
export const confirmedLaterMessage = (message: string) =>
  message.startsWith(TRIED)
    ? DONE + message.slice(TRIED.length).replace(/ The rig did not confirm the trip.*$/, ' The rig confirmed the trip on a later attempt.')
    : message;

export function rigOfflineAlarm(s: { rigId: string; rigCode: string; at: Date }, run: RunContext | null): RaiseAlarmInput {
  const when = s.at.toISOString().slice(0, 19).replace('T', ' ');
  return {
    kind: 'rig-offline',
    severity: 'critical',
    rigId: s.rigId,
    runId: run?.runId ?? null,
    socketIndex: null,
    title: `Rig ${s.rigCode} is offline`,
    message:
      `${s.rigCode} went offline at ${when} UTC` +
      (run ? ` while run ${run.runCode} was ${run.state}` : ' while a run was booked on it') +
      '. Emberlot receives no telemetry from it and cannot trip its sockets until it reconnects.',
    action: OFFLINE_ACTION,
    details: { offlineAt: s.at.toISOString(), runState: run?.state ?? null },
  };
}

export function ambientAlarm(
  m: { rigId: string; rigCode: string; chamberC: number; setpointC: number | null },
  run: RunContext,
  out: AmbientOut,
): RaiseAlarmInput {
  const { setC: set, bandC: band, deviationC: dev } = out;
  return {
    kind: 'ambient-out-of-band',
    severity: 'warning',
    rigId: m.rigId,
    runId: run.runId,
    socketIndex: null,
    title: `Chamber of ${m.rigCode} out of band`,
    message: `The chamber of ${m.rigCode} reads ${f1(m.chamberC)} °C; run ${run.runCode} holds ${f1(set)} °C ± ${f1(band)} °C (${f1(set - band)}–${f1(set + band)} °C), ${f1(Math.abs(dev))} °C ${dev > 0 ? 'too hot' : 'too cold'}.`,
    action: AMBIENT_ACTION,
    details: { chamberC: m.chamberC, setC: set, bandC: round(band, 2), deviationC: round(dev, 2), rigSetpointC: m.setpointC },
  };
}

export function biasAlarm(p: SocketPlace, run: RunContext, off: BiasOff): RaiseAlarmInput {
  const tol = off.tolerancePct;
  const pct = ((off.measured - off.set) / off.set) * 100;
  return {
    kind: 'bias-out-of-tolerance',
    severity: 'warning',
    rigId: p.rigId,
    runId: run.runId,
    socketIndex: p.socket,
    title: `Socket ${p.socket} on ${p.rigCode}: bias out of tolerance`,
    message: `Socket ${p.socket} on ${p.rigCode} reads ${fmtUnit(off.measured, off.unit)} ${off.what} against the plan's ${fmtUnit(off.set, off.unit)} (± ${tol} %): ${Math.abs(pct).toFixed(1)} % ${pct < 0 ? 'low' : 'high'}.`,
    action: BIAS_ACTION,
    details: { quantity: off.what, measured: off.measured, set: off.set, unit: off.unit, tolerancePct: tol, deviationPct: round(pct, 2) },
  };
}

export function leakageAlarm(p: SocketPlace, run: RunContext, jump: LeakageJump): RaiseAlarmInput {
  const { ratio, factor } = jump;
  return {
    kind: 'leakage-jump',
    severity: 'warning',
    rigId: p.rigId,
    runId: run.runId,
    socketIndex: p.socket,
    title: `Socket ${p.socket} on ${p.rigCode}: leakage jumped ×${ratio >= 100 ? Math.round(ratio) : ratio.toFixed(1)}`,
    message: `Under reverse bias the current of socket ${p.socket} on ${p.rigCode} rose from ${fmtUnit(jump.fromA, 'A')} to ${fmtUnit(jump.toA, 'A')} between two samples (×${ratio.toPrecision(3)}; the alarm threshold is ×${factor} beyond the temperature effect, the case moved ${f1(jump.caseDeltaC)} °C).`,
    action: LEAKAGE_ACTION,
    details: { fromA: jump.fromA, toA: jump.toA, ratio: round(ratio, 2), factor, caseC: jump.caseC, stressClockS: jump.stressClockS },
  };
}

/** Telemetry messages from a rig state (pure), including the deliberately broken ones. */
import { TEMP_MAX_C, TEMP_MIN_C, CURRENT_LIMIT_A, type TelemetryObjects } from '../shared/mqtt';
import { isEnergised, type RigState } from './physics';
import { gaussian } from './rng';

export interface SensorNoise {
  /** 1-σ temperature noise, °C. */
  tempC?: number;
  /** 1-σ current noise, % of reading. */
  currentPct?: number;
}

const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));
const round = (x: number, digits: number) => Number(x.toFixed(digits));
const sig = (x: number) => (x === 0 ? 0 : Number(x.toPrecision(5)));

export function buildTelemetry(
  state: RigState,
  seq: number,
  ts: Date,
  opts: { noise?: SensorNoise; rng?: () => number } = {},
): TelemetryObjects {
  const tempNoise = opts.noise?.tempC ?? 0;
  const currentNoise = (opts.noise?.currentPct ?? 0) / 100;
  const rng = opts.rng ?? Math.random;
  const t = (c: number) => round(clamp(c + (tempNoise ? tempNoise * gaussian(rng) : 0), TEMP_MIN_C, TEMP_MAX_C), 2);
  // A rig that has cycled reports every socket's counter and swings (all sockets or none).
  const cycling = state.sockets.some((s) => s.cycle || (s.cycleCount ?? 0) > 0);
  const swing = (x: number | null | undefined) => (x === null || x === undefined ? null : round(x, 2));
  return {
    v: 1,
    rig: state.rigCode,
    seq,
    ts: ts.toISOString(),
    stressClockS: round(state.stressClockS, 3),
    chamberC: t(state.chamberC),
    humidityPct: state.humidityPct === null ? null : round(clamp(state.humidityPct, 0, 100), 1),
    setpointC: round(clamp(state.setpointC, TEMP_MIN_C, TEMP_MAX_C), 2),
    sockets: state.sockets.map((s) => {
      const on = isEnergised(s);
      const noisyI = s.iA * (1 + (currentNoise ? currentNoise * gaussian(rng) : 0));
      return {
        i: s.i,
        caseC: t(s.caseC),
        vV: on ? round(s.vOutV, 3) : 0,
        iA: sig(clamp(Math.max(0, noisyI), 0, CURRENT_LIMIT_A)),
        biasOn: on,
        tripped: s.tripped,
        ...(cycling ? { cycles: s.cycleCount ?? 0, dTjLowC: swing(s.swingLowC), dTjHighC: swing(s.swingHighC) } : {}),
      };
    }),
  };
}

/** A broken payload of one of several kinds, for the server's validation path. */
export function malformedPayload(state: RigState, rng: () => number): string {
  const kinds = [
    () => '{"v":1,"rig":"' + state.rigCode + '","seq":', // truncated JSON
    () => 'not json at all',
    () => JSON.stringify({ v: 1, rig: state.rigCode, seq: 'seven', ts: 'yesterday', sockets: 'many' }), // wrong types
    () =>
      JSON.stringify({
        v: 1,
        rig: state.rigCode,
        seq: 1,
        ts: new Date().toISOString(),
        stressClockS: 0,
        chamberC: 9999, // implausible
        humidityPct: null,
        setpointC: 25,
        sockets: [{ i: 0, caseC: -400, vV: 0, iA: 0, biasOn: false, tripped: false }],
      }),
    () => JSON.stringify({ v: 2, rig: state.rigCode, socket: [0, 1], caseC: [80] }), // column form, columns missing or short
    () => JSON.stringify({ v: 7, rig: state.rigCode }), // unknown version
  ];
  return kinds[Math.floor(rng() * kinds.length) % kinds.length]();
}

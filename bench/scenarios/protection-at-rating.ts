/**
 * protection.atRating: live protection's socket judge on HTRB boards held at their rating, with the
 * oven's spread and injected leakage runaways (bench/lib/at-rating.ts drives the monitor's own
 * SocketJudge with rig-simulator/htrb-board.ts; no network or database: the decision, not its
 * delivery, which the protection scenario measures).
 *
 * 4 boards × 32 sockets, Tj max 150 °C, chamber set point 140 °C (Tj max − 10 °C: every socket in
 * the zone where the old peer rule applied), 160 V reverse bias, leakage 10 nA at 25 °C doubling per
 * 10 °C, θjc 1.5 + θca 2 °C/W, oven spread σ 4 °C per socket (clipped at ±2σ = ±8 °C so that no
 * healthy socket reaches Tj max, where the hard limit trips it by design), the oven swinging
 * ±0.5 °C over 10 min, readings every stress second with 0.2 °C / 1 % noise, 2 stress hours.
 * On each board 3 dies degrade from a random onset (5–20 min) with leakage doubling every 30–120 s
 * until their loop gain passes 1; unprotected, each one passes Tj max (checked in the unit test).
 *   healthy             sockets with no injected fault
 *   falseTrips          healthy sockets tripped (target 0)
 *   injected            sockets with a degrading die
 *   trippedBeforeLimit  injected sockets tripped while their true Tj (and every Tj before) was below
 *                       the limit = set point + 10 °C = 150 °C (= Tj max here)
 *   peerRuleSockets     healthy sockets the replaced rule (within 10 °C of Tj max and ≥ 3 °C above
 *                       the peers' median) would have tripped, on the same data
 */
import { judgeHtrbBoard } from '../lib/at-rating';
import type { HtrbBoardSpec } from '../../rig-simulator/htrb-board';
import { mulberry32 } from '../../shared/random';

const BOARDS = 4;
const SOCKETS = 32;
const DURATION_S = 2 * 3600;
const SETPOINT_C = 140;
const LIMIT_C = SETPOINT_C + 10;

function boardSpec(k: number): HtrbBoardSpec {
  const rand = mulberry32(9100 + k);
  const picks = new Set<number>();
  while (picks.size < 3) picks.add(Math.floor(rand() * SOCKETS));
  return {
    sockets: SOCKETS,
    chamberC: SETPOINT_C,
    spreadSigmaC: 4,
    spreadClipSigma: 2,
    tjMaxC: 150,
    thetaJcCPerW: 1.5,
    thetaCaCPerW: 2,
    tauS: 120,
    vV: 160,
    iRefA: 10e-9,
    doublingC: 10,
    sampleS: 1,
    caseNoiseC: 0.2,
    currentNoise: 0.01,
    chamberSwingC: 0.5,
    chamberSwingPeriodS: 600,
    seed: 4400 + k,
    injected: [...picks].map((socket) => ({
      socket,
      onsetS: 300 + Math.round(rand() * 900),
      growthDoublingS: 30 + Math.round(rand() * 90),
    })),
  };
}

export function runProtectionAtRating(log: (l: string) => void) {
  const runs = Array.from({ length: BOARDS }, (_, k) => judgeHtrbBoard(boardSpec(k), DURATION_S));
  const sockets = runs.flatMap((r, k) => r.sockets.map((s) => ({ ...s, board: k })));
  const healthy = sockets.filter((s) => !s.injected);
  const injected = sockets.filter((s) => s.injected);
  const beforeLimit = injected.filter((s) => s.trippedAtS !== null && s.peakTjC < LIMIT_C && (s.tjAtTripC ?? Infinity) < LIMIT_C);
  const offsets = sockets.map((s) => s.offsetC);
  const mean = offsets.reduce((a, b) => a + b, 0) / offsets.length;
  const sd = Math.sqrt(offsets.reduce((a, b) => a + (b - mean) ** 2, 0) / (offsets.length - 1));
  const judged = runs.reduce((a, r) => a + r.judgedSocketSamples, 0);
  const ms = runs.reduce((a, r) => a + r.judgeMs, 0);
  const r1 = (x: number) => Math.round(x * 10) / 10;
  const out = {
    healthy: healthy.length,
    falseTrips: healthy.filter((s) => s.trippedAtS !== null).length,
    injected: injected.length,
    trippedBeforeLimit: beforeLimit.length,
    limitC: LIMIT_C,
    setpointC: SETPOINT_C,
    tjMaxC: 150,
    spreadSdC: r1(sd),
    spreadMaxC: r1(Math.max(...offsets)),
    healthyPeakTjC: r1(Math.max(...healthy.map((s) => s.peakTjC))),
    peerRuleSockets: healthy.filter((s) => s.peerRuleSamples > 0).length,
    injectedTjAtTripC: injected.map((s) => (s.tjAtTripC === null ? null : r1(s.tjAtTripC))),
    trueLoopGainPeakBeforeTrip: injected.map((s) => Math.round(s.peakLoopGain * 100) / 100),
    tripsByRule: {
      loopGain: injected.filter((s) => /loop gain/.test(s.reason ?? '')).length,
      projection: injected.filter((s) => /projected/.test(s.reason ?? '')).length,
      earlyClimb: injected.filter((s) => /climbing fast/.test(s.reason ?? '')).length,
      peerOutlier: injected.filter((s) => /beyond the board's spread/.test(s.reason ?? '')).length,
      hardLimit: injected.filter((s) => /has reached the rating/.test(s.reason ?? '')).length,
    },
    falseTripSockets: healthy.filter((s) => s.trippedAtS !== null).map((s) => `board ${s.board}/${s.socket}: ${s.reason}`),
    stressSeconds: DURATION_S,
    judgedSocketSamples: judged,
    judgeMicrosecondsPerSocketSample: Math.round((ms * 1000 * 100) / judged) / 100,
  };
  log(
    `  protection.atRating: ${out.falseTrips} false trips of ${out.healthy}; ${out.trippedBeforeLimit}/${out.injected} runaways tripped below ${LIMIT_C} °C`,
  );
  return out;
}

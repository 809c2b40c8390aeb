/**
 * Live protection's socket judge (server/modules/protection/judge.ts, the code the monitor runs per
 * telemetry message) driven by an HTRB board at its rating (rig-simulator/htrb-board.ts): each
 * sample becomes a TelemetryLanded message, the judge takes the peers' median junction as every
 * socket's baseline exactly as the monitor does, and a 'trip' removes the socket's bias at once
 * (the next sample reads it latched). No network and no database: this measures the decision, not
 * the delivery (bench/scenarios/protection.ts measures that through MQTT).
 * Used by the bench's protection.atRating and tests/unit/safety/protection-at-rating.test.ts.
 */
import { FLAG_BIAS_ON, FLAG_TRIPPED } from '../../shared/mqtt/payloads';
import { DEFAULT_PROTECTION_OPTIONS, type ProtectionOptions } from '../../shared/safety/protection';
import { HtrbBoard, type HtrbBoardSpec } from '../../rig-simulator/htrb-board';
import { SocketJudge } from '../../server/modules/protection/judge';
import { DEFAULT_MONITOR_OPTIONS } from '../../server/modules/protection/protection.monitor';
import type { TelemetryLanded } from '../../server/events';

export interface SocketOutcome {
  socket: number;
  injected: boolean;
  offsetC: number;
  /** Stress seconds of the trip decision, its reason, and the true Tj at that sample. */
  trippedAtS: number | null;
  reason: string | null;
  tjAtTripC: number | null;
  /** Highest true Tj while energised (before any trip). */
  peakTjC: number;
  /** Highest true loop gain θ·∂P/∂Tj while energised. */
  peakLoopGain: number;
  /** Samples judged within marginC of Tj max AND ≥ selfHeatAllowanceC above the peers' median (the rule this replaced). */
  peerRuleSamples: number;
}

export interface AtRatingOutcome {
  sockets: SocketOutcome[];
  samples: number;
  judgedSocketSamples: number;
  /** Wall ms spent in the judge alone (admit, baseline, touch, runaway). */
  judgeMs: number;
}

/** Run one board for durationS stress seconds under the judge. */
export function judgeHtrbBoard(spec: HtrbBoardSpec, durationS: number, protection: Partial<ProtectionOptions> = {}): AtRatingOutcome {
  const board = new HtrbBoard(spec);
  const p: ProtectionOptions = { ...DEFAULT_PROTECTION_OPTIONS, ...protection };
  const judge = new SocketJudge({
    ...DEFAULT_MONITOR_OPTIONS,
    protection: p,
    defaultDevice: { tjMaxC: spec.tjMaxC, thetaJcCPerW: spec.thetaJcCPerW },
  });
  const rig = judge.newRig('AR-01');
  const n = spec.sockets;
  const out: SocketOutcome[] = Array.from({ length: n }, (_, i) => ({
    socket: i,
    injected: spec.injected.some((r) => r.socket === i),
    offsetC: board.offsetsC[i],
    trippedAtS: null,
    reason: null,
    tjAtTripC: null,
    peakTjC: board.tjC[i],
    peakLoopGain: 0,
    peerRuleSamples: 0,
  }));
  const socketIdx = Array.from({ length: n }, (_, i) => i);
  let samples = 0;
  let judged = 0;
  let judgeMs = 0;
  for (let seq = 1; ; seq++) {
    const b = board.next();
    if (b.tS > durationS) break;
    samples++;
    const m: TelemetryLanded = {
      rigId: 'at-rating',
      rigCode: 'AR-01',
      seq,
      ts: new Date(0),
      stressClockS: b.tS,
      chamberC: b.chamberC,
      humidityPct: null,
      setpointC: spec.chamberC,
      socket: socketIdx,
      caseC: b.caseC,
      vV: b.vV,
      iA: b.iA,
      flags: b.biasOn.map((on) => (on ? FLAG_BIAS_ON : FLAG_TRIPPED)),
    };
    const t0 = performance.now();
    judge.admit(rig, m);
    const baseline = judge.peerBaseline(m, null);
    const spread = judge.peerSpreadC;
    judge.touch(rig, m);
    const trips: Array<{ i: number; reason: string }> = [];
    for (let k = 0; k < n; k++) {
      const st = judge.socketState(rig, k);
      if ((m.flags[k] & FLAG_TRIPPED) !== 0) {
        judge.latchHeld(st);
        continue;
      }
      judge.latchReset(st);
      const sample = judge.sampleAt(m, k);
      const v = judge.runaway(st, judge.deviceFor(null, k), sample, baseline, spread);
      judged++;
      if (typeof v === 'object' && v.action === 'trip') {
        trips.push({ i: k, reason: v.reason });
        judge.tripIssued(st, `trip:AR-01:${k}`, v.reason);
      }
      judge.remember(st, sample);
    }
    judgeMs += performance.now() - t0;
    for (let k = 0; k < n; k++) {
      if (!b.biasOn[k]) continue;
      const o = out[k];
      o.peakTjC = Math.max(o.peakTjC, b.trueTjC[k]);
      o.peakLoopGain = Math.max(o.peakLoopGain, board.loopGain(k));
      const tj = b.caseC[k] + spec.thetaJcCPerW * b.vV[k] * b.iA[k];
      if (baseline !== undefined && tj >= spec.tjMaxC - p.marginC && tj - baseline >= p.selfHeatAllowanceC) o.peerRuleSamples++;
    }
    for (const t of trips) {
      const o = out[t.i];
      o.trippedAtS = b.tS;
      o.reason = t.reason;
      o.tjAtTripC = b.trueTjC[t.i];
      board.trip(t.i);
    }
  }
  return { sockets: out, samples, judgedSocketSamples: judged, judgeMs };
}

/**
 * Each socket's credited hours by the junction temperature they were earned at (issue #20 item 6).
 * Every credited interval between two samples adds its hours at the mean of the junction estimated
 * at both ends from the socket's own telemetry (case temperature + θjc × measured power,
 * shared/physics junctionFromTelemetry), and for humidity plans the chamber's mean humidity.
 * The lot's FIT integrates the acceleration factor over these (shared/reliability/mechanisms).
 */
import { junctionFromTelemetry } from '../../../shared/physics';
import { addStressSegment, type StressSegment } from '../../../shared/reliability';
import type { ClockSample, SocketSample } from '../../../shared/scheduling';

export interface SocketSegments {
  /** θjc of the device in each socket (°C/W). */
  thetaJc: Map<number, number>;
  /** socket → its segment list (changed in place). */
  bySocket: Map<number, StressSegment[]>;
}

/** A socket's estimated junction from one sample: the estimate credit uses (and the floor's socket detail shows). */
export function junctionOf(s: Pick<SocketSample, 'caseC' | 'vV' | 'iA'> | undefined, thetaJc: number | undefined): number | null {
  if (!s || s.caseC === undefined || !Number.isFinite(s.caseC)) return null;
  const iA = s.iA !== undefined && Number.isFinite(s.iA) ? s.iA : 0;
  return junctionFromTelemetry({ caseC: s.caseC, vV: s.vV, iA, thetaJcCPerW: thetaJc ?? 0 });
}

/** Adds the interval prev → cur's credited seconds (`socketS`) to each socket's segments. */
export function intervalSegments(
  into: SocketSegments,
  prev: ClockSample,
  cur: ClockSample,
  socketS: ReadonlyMap<number, number>,
  humidity: boolean,
): void {
  if (!socketS.size) return;
  const rh = humidity && prev.humidityPct !== null && cur.humidityPct !== null ? (prev.humidityPct + cur.humidityPct) / 2 : null;
  for (const [k, seconds] of socketS) {
    if (!(seconds > 0)) continue;
    const theta = into.thetaJc.get(k);
    const a = junctionOf(
      prev.sockets.find((s) => s.socket === k),
      theta,
    );
    const b = junctionOf(
      cur.sockets.find((s) => s.socket === k),
      theta,
    );
    if (a === null || b === null) continue;
    let list = into.bySocket.get(k);
    if (!list) {
      list = [];
      into.bySocket.set(k, list);
    }
    addStressSegment(list, { hours: seconds / 3600, tjC: (a + b) / 2, rhPct: rh });
  }
}

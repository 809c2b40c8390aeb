/**
 * Micro-benchmark: CPU time the thermal tracker's in-memory part spends per ingested message
 * (shared/thermal/track.ts `SocketThermalTrack.push` for every socket of a 64-socket message, as
 * server/modules/thermal/thermal.tracker.ts calls it), and the trend rule's share of it
 * (`ThermalTrendSeries.offer`, timed around each call; "off" replaces it with a no-op). The
 * tracker's SQL (its one run lookup per 15 s per rig and the fits it stores) is not in these figures.
 *
 *   SWC_NODE_PROJECT=server/tsconfig.json node -r @swc-node/register bench/micro/thermal-track.ts [messages] [sockets]
 *
 * Readings: a first-order case model per socket (θ 2 °C/W, τ 120 s, ~1.9 W, 30 stress s per message,
 * 0.2 K noise), every socket biased; socket 0 dries at 0.01 °C/W per h. Timings are noisy on a
 * shared machine: run it a few times. Prints one JSON line.
 */
import { mulberry32 } from '../../shared/random';
import { SocketThermalTrack, ThermalTrendSeries } from '../../shared/thermal';

const messages = Number(process.argv[2] ?? 6000);
const sockets = Number(process.argv[3] ?? 64);
const DT_S = 30;
const TAU_S = 120;
const P_W = 1.9;

function run(trendOn: boolean): { usPerMessage: number; trendUsPerMessage: number; evaluations: number; maxPoints: number } {
  const r = mulberry32(7);
  const g = () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
  const tracks = Array.from({ length: sockets }, () => new SocketThermalTrack());
  let trendNs = 0n;
  let evaluations = 0;
  for (const t of tracks) {
    const series: ThermalTrendSeries = t.trend;
    const offer = series.offer.bind(series);
    series.offer = (...a: Parameters<ThermalTrendSeries['offer']>) => {
      if (!trendOn) return false;
      const t0 = process.hrtime.bigint();
      const joined = offer(...a);
      trendNs += process.hrtime.bigint() - t0;
      if (joined) evaluations++;
      return joined;
    };
  }
  const caseC = new Float64Array(sockets).fill(25);
  // Pre-draw the readings so the timing is the tracker's alone.
  const rows: Array<{ tS: number; caseC: Float64Array }> = [];
  for (let k = 1; k <= messages; k++) {
    const tS = k * DT_S;
    const c = new Float64Array(sockets);
    for (let i = 0; i < sockets; i++) {
      const theta = 2 + (i === 0 ? (0.01 * tS) / 3600 : 0);
      const target = 25 + theta * P_W;
      caseC[i] = target + (caseC[i] - target) * Math.exp(-DT_S / TAU_S);
      c[i] = caseC[i] + 0.2 * g();
    }
    rows.push({ tS, caseC: c });
  }
  const t0 = process.hrtime.bigint();
  for (const row of rows) {
    for (let i = 0; i < sockets; i++) {
      tracks[i].push({ tS: row.tS, caseC: row.caseC[i], ambientC: 25, powerW: P_W, biasOn: true });
    }
  }
  const total = Number(process.hrtime.bigint() - t0);
  return {
    usPerMessage: total / 1000 / messages,
    trendUsPerMessage: Number(trendNs) / 1000 / messages,
    evaluations,
    maxPoints: Math.max(...tracks.map((t) => t.trend.points.length)),
  };
}

run(true); // warm-up (JIT)
const on = run(true);
const off = run(false);
console.log(
  JSON.stringify({
    messages,
    sockets,
    stressHours: (messages * DT_S) / 3600,
    trackerUsPerMessageTrendOn: Number(on.usPerMessage.toFixed(1)),
    trackerUsPerMessageTrendOff: Number(off.usPerMessage.toFixed(1)),
    trendUsPerMessage: Number(on.trendUsPerMessage.toFixed(1)),
    trendEvaluations: on.evaluations,
    trendUsPerEvaluation: Number(((on.trendUsPerMessage * messages) / Math.max(1, on.evaluations)).toFixed(1)),
    maxTrendPoints: on.maxPoints,
  }),
);

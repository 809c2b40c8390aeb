import { SocketSim, HEALTHY } from './tests/broker/protection-fixtures';
import { SocketThermalTrack } from './shared/thermal';
import { mulberry32 } from './shared/random';
const g = (r: () => number) => () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
const z = g(mulberry32(103));
const s = new SocketSim({ ...HEALTHY, vV: 20 }, 100);
const tr = new SocketThermalTrack();
for (let tS = 0; tS <= 1200; tS += 2) {
  const r = s.reading(1, { caseC: 0.2, currentRel: 0.005 }, z);
  const ch = 100 + 0.1 * z();
  const e = tr.push({ tS, caseC: r.caseC, ambientC: ch, powerW: r.vV * r.iA, biasOn: r.biasOn });
  if (e && tS < 700) console.log(tS, e.trigger, e.fit.method, e.fit.thetaCPerW?.toFixed(3), e.fit.tauS?.toFixed(0), e.fit.good, e.fit.rmsC?.toFixed(2), e.fit.meanRiseK.toFixed(2), e.fit.reason ?? e.fit.tauNote, e.flag);
  s.step(2, 100);
}

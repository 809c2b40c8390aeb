/**
 * Protection's loop gain with the socket's identified θca (shared/thermal/rules.ts protectionThetaCa):
 * the identified value may raise the θca the loop gain uses, never lower it, and the assessment
 * records which one was used. The loop gain is θ·∂P/∂Tj [pub: textbook thermal-stability criterion,
 * REFERENCE.md §4]; the trace is generated: a socket whose power creeps up with its case temperature.
 */
import { assessSocket, type ProtectionDevice, type SocketSample } from '../../shared/safety/protection';

const dev: ProtectionDevice = { tjMaxC: 150, thetaJcCPerW: 1.5, thetaJaCPerW: 62 };

/** Case = chamber + θca·P (steady), P rising 2 → 3.2 W over 10 minutes; bias on throughout. */
function trace(thetaCa: number): SocketSample[] {
  const out: SocketSample[] = [];
  for (let tS = 0; tS <= 600; tS += 5) {
    const p = 2 + 0.002 * tS;
    out.push({ tS, caseC: 100 + thetaCa * p, vV: 20, iA: p / 20, chamberC: 100, biasOn: true });
  }
  return out;
}

describe('loop gain with an identified θca', () => {
  const samples = trace(3);
  const own = assessSocket(samples, dev);

  it('without an identification: protection’s own window fit (θca ≈ 3 °C/W here)', () => {
    expect(own.loopGain).not.toBeNull();
    expect(own.thetaCaCPerW!).toBeCloseTo(3, 6);
    expect(own.thetaCaSource).toBe('window');
  });

  it('a larger identified θca raises the loop gain in proportion to θjc + θca and is recorded', () => {
    const withId = assessSocket(samples, { ...dev, identifiedThetaCaCPerW: 6 });
    expect(withId.thetaCaSource).toBe('identified');
    expect(withId.thetaCaCPerW).toBe(6);
    // G = (θjc + θca)·∂P/∂Tj: the same ∂P/∂Tj, θ from 4.5 to 7.5 °C/W.
    expect(withId.loopGain! / own.loopGain!).toBeCloseTo(7.5 / 4.5, 9);
  });

  it('a smaller identified θca changes nothing (never less conservative)', () => {
    const lower = assessSocket(samples, { ...dev, identifiedThetaCaCPerW: 1 });
    expect(lower.loopGain).toBe(own.loopGain);
    expect(lower.thetaCaCPerW).toBe(own.thetaCaCPerW);
    expect(lower.thetaCaSource).toBe('window');
  });

  it('an identified θca beyond θja − θjc lifts the bound (a degrading pad can be worse than free air)', () => {
    const id = assessSocket(samples, { ...dev, identifiedThetaCaCPerW: 70 });
    expect(id.thetaCaCPerW).toBe(70);
    expect(id.loopGain! / own.loopGain!).toBeCloseTo(71.5 / 4.5, 9);
  });
});

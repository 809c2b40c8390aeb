/**
 * The socket judge (server/modules/protection/judge.ts) without I/O: samples in, verdicts out, and
 * the operator's wording of those verdicts (alarm-text.ts). The monitor around it is tested end to
 * end in tests/broker/protection*.test.ts.
 */
import { DEFAULT_PROTECTION_OPTIONS, type SocketAssessment, type SocketSample } from '../../shared/safety/protection';
import { biasAlarm, fmtUnit, leakageAlarm } from '../../server/modules/protection/alarm-text';
import { SocketJudge, type BiasOff, type JudgeOptions, type LeakageJump } from '../../server/modules/protection/judge';
import { DEFAULT_MONITOR_OPTIONS } from '../../server/modules/protection/protection.monitor';
import type { RunContext } from '../../server/modules/protection/run-context';
import { tripCmdId } from '../../server/modules/protection/trip-delivery';

const OPTS: JudgeOptions = { ...DEFAULT_MONITOR_OPTIONS, protection: DEFAULT_PROTECTION_OPTIONS };

function run(kind: RunContext['planKind'], bias: Partial<RunContext['bias']>, state: RunContext['state'] = 'stressing'): RunContext {
  return {
    runId: 'r-1',
    runCode: 'RUN-1',
    state,
    planKind: kind,
    chamberC: 150,
    chamberBand: { belowK: 0, aboveK: 5 },
    bias: { vcbV: null, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5, ...bias },
    planDevice: { tjMaxC: 150, thetaJcCPerW: 2 },
    planPartNumber: 'HPD-2N100',
    sockets: new Map(),
  };
}

const sample = (p: Partial<SocketSample>): SocketSample => ({ tS: 0, caseC: 150, vV: 40, iA: 1e-6, chamberC: 150, biasOn: true, ...p });

describe('bias against the plan (± tolerancePct of set, debounced)', () => {
  test('reverse bias: 42.5 V against 40 V ± 5 % is out (6.25 % high), raised on the second sample, cleared after two in', () => {
    const judge = new SocketJudge(OPTS);
    const st = judge.socketState(judge.newRig('OV-1'), 0);
    const r = run('htrb', { vcbV: 40 });
    expect(judge.bias(r, st, sample({ vV: 42.5 }))).toBeUndefined(); // 1 of debounceSamples = 2
    const off = judge.bias(r, st, sample({ vV: 42.5 })) as BiasOff;
    expect(off).toEqual({ what: 'reverse voltage', unit: 'V', set: 40, measured: 42.5, tolerancePct: 5 });
    // 41.9 V is 4.75 % high: inside ± 5 %.
    expect(judge.bias(r, st, sample({ vV: 41.9 }))).toBeUndefined();
    expect(judge.bias(r, st, sample({ vV: 41.9 }))).toBe('clear-due');
    // The wording: (42.5 − 40) / 40 = 6.25 % → "6.3 % high" (one decimal).
    const text = biasAlarm({ rigId: 'rig', rigCode: 'OV-1', socket: 0 }, r, off);
    expect(text.message).toBe("Socket 0 on OV-1 reads 42.5 V reverse voltage against the plan's 40 V (± 5 %): 6.3 % high.");
    expect(text.details).toMatchObject({ deviationPct: 6.25 });
  });

  test('powered: VCE is judged, and not at all outside stressing or with bias off', () => {
    const judge = new SocketJudge(OPTS);
    const st = judge.socketState(judge.newRig('OV-1'), 0);
    const powered = run('hotl', { vceV: 20, icA: 0.5 });
    judge.bias(powered, st, sample({ vV: 18, iA: 0.5 }));
    expect(judge.bias(powered, st, sample({ vV: 18, iA: 0.5 }))).toMatchObject({ what: 'VCE', set: 20, measured: 18 });
    expect(judge.bias(run('hotl', { vceV: 20 }, 'heating'), st, sample({ vV: 10 }))).toBeUndefined();
    expect(st.biasOut).toBe(0);
    expect(judge.bias(powered, st, sample({ vV: 10, biasOn: false }))).toBeUndefined();
  });
});

describe('leakage jump under reverse bias (×leakageJumpFactor beyond the temperature effect)', () => {
  // Leakage roughly doubles per 10 °C (common practice): a case 10 °C hotter allows ×2 more.
  test('×6 at the same case temperature jumps; ×6 with the case 10 °C hotter (allowance ×10) does not', () => {
    const judge = new SocketJudge(OPTS);
    const rig = judge.newRig('OV-1');
    const r = run('htrb', { vcbV: 40 });
    const a = judge.socketState(rig, 0);
    judge.remember(a, sample({ iA: 1e-6, caseC: 150 }));
    const jump = judge.leakage(r, a, sample({ iA: 6e-6, caseC: 150 }), false) as LeakageJump;
    expect(jump).toMatchObject({ fromA: 1e-6, toA: 6e-6, factor: 5, caseDeltaC: 0 });
    expect(jump.ratio).toBeCloseTo(6, 12);
    expect(a.leakBaseline).toBe(1e-6);
    expect(leakageAlarm({ rigId: 'rig', rigCode: 'OV-1', socket: 0 }, r, jump).title).toBe('Socket 0 on OV-1: leakage jumped ×6.0');
    // Back below 5 × the baseline while the alarm is live: clear.
    expect(judge.leakage(r, a, sample({ iA: 4e-6 }), true)).toBe('clear');
    expect(a.leakBaseline).toBeNull();

    const b = judge.socketState(rig, 1);
    judge.remember(b, sample({ iA: 1e-6, caseC: 150 }));
    expect(judge.leakage(r, b, sample({ iA: 6e-6, caseC: 160 }), false)).toBeUndefined();
    expect(b.leakBaseline).toBeNull();
  });

  test('powered plans and currents below the floor are not judged', () => {
    const judge = new SocketJudge(OPTS);
    const st = judge.socketState(judge.newRig('OV-1'), 0);
    judge.remember(st, sample({ iA: 1e-6 }));
    expect(judge.leakage(run('hotl', { vceV: 20 }), st, sample({ iA: 1e-3 }), false)).toBeUndefined();
    judge.remember(st, sample({ iA: 1e-10 })); // below leakageFloorA = 1e-9
    expect(judge.leakage(run('htrb', { vcbV: 40 }), st, sample({ iA: 1e-8 }), false)).toBeUndefined();
  });
});

test('chamber band: 150 °C +5/−0 K is 152.5 ± 2.5 °C; 155.5 °C is out after two samples, back in after two [memory: JESD22-A108 +5/−0 — confirm]', () => {
  const judge = new SocketJudge(OPTS);
  const rig = judge.newRig('OV-1');
  const r = run('htrb', { vcbV: 40 });
  expect(judge.ambient(rig, r, 155.5)).toBeUndefined();
  const out = judge.ambient(rig, r, 155.5);
  expect(out).toEqual({ setC: 152.5, bandC: 2.5, deviationC: 3 });
  expect(judge.ambient(rig, r, 150)).toBeUndefined();
  expect(judge.ambient(rig, r, 150)).toBe('clear-due');
  // below the minimum is out too
  expect(judge.ambient(rig, r, 149.9)).toBeUndefined();
  expect(judge.ambient(rig, r, 149.9)).toEqual({ setC: 152.5, bandC: 2.5, deviationC: expect.closeTo(-2.6, 10) });
  expect(judge.ambient(rig, run('htrb', { vcbV: 40 }, 'paused'), 100)).toBe('no-stress');
  expect(rig.ambientIn).toBe(0);
});

test('a late re-send is not judged; an earlier clock with a newer seq restarts the windows', () => {
  const judge = new SocketJudge(OPTS);
  const rig = judge.newRig('OV-1');
  const msg = (seq: number, clock: number) => ({ seq, stressClockS: clock }) as Parameters<SocketJudge['admit']>[1];
  expect(judge.admit(rig, msg(10, 1000))).toBe(true);
  expect(judge.admit(rig, msg(9, 1100))).toBe(false);
  const st = judge.socketState(rig, 0);
  st.trend.push(sample({ tS: 1000 }), 2);
  expect(st.trend.count).toBe(1);
  expect(judge.admit(rig, msg(11, 5))).toBe(true);
  expect(st.trend.count).toBe(0);
});

test('the runaway verdict: calm without a trend, not judged with bias off; a latch reset forgets the trip', () => {
  const judge = new SocketJudge(OPTS);
  const st = judge.socketState(judge.newRig('OV-1'), 0);
  const dev = judge.deviceFor(null, 0);
  expect(dev?.device).toEqual({ tjMaxC: 150, thetaJcCPerW: 2 }); // the conservative default device
  for (let k = 0; k < 3; k++)
    expect(judge.runaway(st, dev, sample({ tS: k, vV: 40, iA: 0.1, caseC: 120 }), undefined)).toBe(k < 2 ? 'calm' : 'calm-long');
  expect(judge.runaway(st, dev, sample({ tS: 4, biasOn: false }), undefined)).toBe('not-judged');
  judge.tripIssued(st, 'trip:OV-1:0:norun', 'test');
  expect(judge.runaway(st, dev, sample({ tS: 5 }), undefined)).toBe('not-judged');
  judge.latchHeld(st);
  expect(judge.latchReset(st)).toBe(true);
  expect(st.tripCmdId).toBeNull();
  expect(judge.latchReset(st)).toBe(false);
});

test('a warning is due only after warnAfterSamples consecutive warn assessments', () => {
  const judge = new SocketJudge(OPTS);
  const st = judge.socketState(judge.newRig('OV-1'), 0);
  const warn = { action: 'warn' } as SocketAssessment;
  st.warnStreak = 2;
  expect(judge.warningDue(st, warn)).toBe(false);
  st.warnStreak = 3;
  expect(judge.warningDue(st, warn)).toBe(true);
  expect(judge.warningDue(st, { action: 'trip' } as SocketAssessment)).toBe(false);
});

test('wording helpers: currents in engineering units; trip command ids fit 64 characters', () => {
  expect(fmtUnit(2.5e-9, 'A')).toBe('2.50 nA');
  expect(fmtUnit(4.2e-5, 'A')).toBe('42.0 µA');
  expect(fmtUnit(0.1234, 'A')).toBe('123 mA');
  expect(fmtUnit(40.25, 'V')).toBe('40.25 V');
  expect(tripCmdId('OV-1', 3, 'r-1')).toBe('trip:OV-1:3:r-1');
  expect(tripCmdId('OV-1', 3, 'r-1', 1)).toBe('trip:OV-1:3:r-1:2');
  expect(tripCmdId('OVEN-LONG-CODE-0001', 63, '0b5f8a2e-1c3d-4e5f-8a9b-0c1d2e3f4a5b', 2).length).toBeLessThanOrEqual(64);
});

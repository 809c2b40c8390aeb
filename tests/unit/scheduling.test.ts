/**
 * Pure scheduling: constraint checks (every refusal asserted word for word), run length, the LPT
 * heuristic on small cases with known optimal answers, and the stress-hour accrual rule.
 */
import {
  HOURS_EPS,
  accrueInterval,
  accrueSeries,
  reachedH,
  chamberBand,
  chamberWithinBand,
  earliestSlot,
  msPerClockHFor,
  planBiasSettings,
  planSchedule,
  proposeRigs,
  runDurationH,
  staticRefusals,
  windowConflicts,
  type AccrualConditions,
  type ClockSample,
  type Commitment,
  type Job,
  type RigCapability,
  type RunNeeds,
  type TimingOptions,
} from '../../shared/scheduling';

const H = 3_600_000;
const T0 = Date.UTC(2026, 2, 2, 8, 0); // 2026-03-02 08:00 UTC

const rig = (code: string, over: Partial<RigCapability> = {}): RigCapability => ({
  id: `rig-${code}`,
  code,
  socketCount: 64,
  maxTempC: 200,
  maxVoltageV: 800,
  humidityCapable: false,
  maxHumidityPct: null,
  active: true,
  ...over,
});

const needs = (over: Partial<RunNeeds> = {}): RunNeeds => ({
  chamberC: 150,
  humidityPct: null,
  biasV: 112,
  sampleSize: 45,
  durationH: 1000,
  readPointsH: [0, 168, 500, 1000],
  ...over,
});

/** Hours as wall hours, no holds: lengths equal plan hours (easy known optima). */
const BARE: TimingOptions = { holdPerReadPointH: 0, heatingAllowanceH: 0, msPerClockH: H };

describe('run length (plan hours + read-point holds + heating allowance)', () => {
  it('1000 h with read points 0/168/500/1000, 24 h holds, 2 h heating → 1050 h (two holds on the way)', () => {
    expect(runDurationH(needs(), { holdPerReadPointH: 24, heatingAllowanceH: 2, msPerClockH: H })).toBe(1050);
  });
  it('a plan with only 0 and the end holds nothing', () => {
    expect(
      runDurationH(needs({ durationH: 168, readPointsH: [0, 168] }), { holdPerReadPointH: 24, heatingAllowanceH: 2, msPerClockH: H }),
    ).toBe(170);
  });
  it('the demo clock rate (stress hours per wall second) maps to wall ms per clock hour', () => {
    expect(msPerClockHFor(1)).toBe(1000);
    expect(msPerClockHFor(1 / 3600)).toBeCloseTo(H, 6);
  });
});

describe('static checks: each refusal in words with its numbers', () => {
  it('accepts a rig that can do everything', () => {
    expect(staticRefusals(rig('OV-01'), needs())).toEqual([]);
  });
  it('too few sockets', () => {
    expect(staticRefusals(rig('OV-04', { socketCount: 32 }), needs())).toEqual(['Oven OV-04 holds 32 sockets; the plan needs 45.']);
  });
  it('chamber too hot for the rig', () => {
    expect(staticRefusals(rig('OV-03', { maxTempC: 175 }), needs({ chamberC: 200 }))).toEqual([
      'Oven OV-03 reaches at most 175 °C; the plan needs 200 °C.',
    ]);
  });
  it('bias voltage beyond the supply', () => {
    expect(staticRefusals(rig('OV-03', { maxVoltageV: 100 }), needs({ biasV: 560 }))).toEqual([
      'Oven OV-03 supplies at most 100 V of bias; the plan needs 560 V.',
    ]);
  });
  it('humidity on a dry oven, and above a humidity chamber’s limit', () => {
    expect(staticRefusals(rig('OV-01'), needs({ chamberC: 85, humidityPct: 85 }))).toEqual([
      'Oven OV-01 has no humidity control; the plan needs 85 % RH.',
    ]);
    expect(staticRefusals(rig('HC-05', { humidityCapable: true, maxHumidityPct: 95 }), needs({ chamberC: 85, humidityPct: 98 }))).toEqual([
      'Oven HC-05 holds at most 95 % RH; the plan needs 98 % RH.',
    ]);
  });
  it('a decommissioned rig, with every other reason listed too', () => {
    expect(staticRefusals(rig('OV-06', { active: false, socketCount: 32, maxVoltageV: 60 }), needs())).toEqual([
      'Oven OV-06 is decommissioned and takes no new runs.',
      'Oven OV-06 holds 32 sockets; the plan needs 45.',
      'Oven OV-06 supplies at most 60 V of bias; the plan needs 112 V.',
    ]);
  });
});

describe('window checks: maintenance, one chamber condition per oven, sockets shared, no overlap', () => {
  const r = rig('OV-02');
  const busy = (over: Partial<Commitment>): Commitment => ({
    runId: 'x',
    code: 'HTRB-2611-A',
    rigId: r.id,
    startMs: T0,
    endMs: T0 + 100 * H,
    chamberC: 150,
    humidityPct: null,
    sockets: 40,
    ...over,
  });

  it('maintenance overlapping the window', () => {
    const m = [{ rigId: r.id, startMs: T0 + 24 * H, endMs: T0 + 33 * H, reason: 'door seal' }];
    expect(windowConflicts(r, needs(), T0, T0 + 50 * H, [], m)).toEqual([
      'Oven OV-02 is in maintenance from 2026-03-03 08:00 UTC to 2026-03-03 17:00 UTC (door seal).',
    ]);
    expect(windowConflicts(r, needs(), T0 + 33 * H, T0 + 50 * H, [], m)).toEqual([]);
  });
  it('another chamber temperature in the same oven at the same time', () => {
    expect(windowConflicts(r, needs({ chamberC: 125, sampleSize: 10 }), T0, T0 + 10 * H, [busy({})], [])).toEqual([
      'Oven OV-02 runs HTRB-2611-A at 150 °C until 2026-03-06 12:00 UTC; the plan needs 125 °C.',
    ]);
  });
  it('the same condition shares the oven while the sockets last', () => {
    expect(windowConflicts(r, needs({ sampleSize: 24 }), T0, T0 + 10 * H, [busy({})], [])).toEqual([]);
    expect(windowConflicts(r, needs({ sampleSize: 25 }), T0, T0 + 10 * H, [busy({})], [])).toEqual([
      'Oven OV-02 has 24 of 64 sockets free until 2026-03-06 12:00 UTC (HTRB-2611-A uses 40); the plan needs 25.',
    ]);
  });
  it('other rigs’ runs do not matter', () => {
    expect(windowConflicts(r, needs({ chamberC: 125 }), T0, T0 + 10 * H, [busy({ rigId: 'elsewhere' })], [])).toEqual([]);
  });
  it('earliest slot: after the conflicting run ends, with the reason it waits', () => {
    const slot = earliestSlot(r, needs({ chamberC: 125, durationH: 10, readPointsH: [0, 10] }), T0, [busy({})], [], BARE);
    expect(slot).toEqual({
      startMs: T0 + 100 * H,
      endMs: T0 + 110 * H,
      delayReasons: ['Oven OV-02 runs HTRB-2611-A at 150 °C until 2026-03-06 12:00 UTC; the plan needs 125 °C.'],
    });
  });
  it('earliest slot: a window between two maintenance periods that is long enough', () => {
    const m = [
      { rigId: r.id, startMs: T0, endMs: T0 + 5 * H, reason: 'calibration' },
      { rigId: r.id, startMs: T0 + 8 * H, endMs: T0 + 9 * H, reason: 'fan' },
      { rigId: r.id, startMs: T0 + 30 * H, endMs: T0 + 31 * H, reason: 'filters' },
    ];
    const slot = earliestSlot(r, needs({ durationH: 20, readPointsH: [0, 20] }), T0, [], m, BARE);
    expect(slot?.startMs).toBe(T0 + 9 * H); // 5 → 25 would hit the fan; 9 → 29 fits before the filters
  });
});

describe('LPT list scheduling', () => {
  const A = rig('OV-01');
  const B = rig('OV-02');
  const job = (code: string, hours: number, over: Partial<Job> = {}): Job => ({
    ...needs({ durationH: hours, readPointsH: [0, hours] }),
    id: code,
    code,
    ...over,
  });

  it('3 runs of 4, 2 and 2 h on 2 equal rigs: makespan 4 h (optimal: the total is 8 h on 2 rigs)', () => {
    const p = planSchedule([job('R2a', 2), job('R4', 4), job('R2b', 2)], [A, B], [], [], T0, BARE);
    expect(p.makespanEndMs - T0).toBe(4 * H);
    expect(p.assignments.map((a) => [a.code, a.rigCode, (a.startMs - T0) / H, (a.endMs - T0) / H])).toEqual([
      ['R4', 'OV-01', 0, 4],
      ['R2a', 'OV-02', 0, 2],
      ['R2b', 'OV-02', 2, 4],
    ]);
  });

  it('takes the longest first, so a short run does not push the long one late (5, 3, 3, 2, 2, 1 → 8 h, optimal)', () => {
    const jobs = [job('J1', 1), job('J2a', 2), job('J2b', 2), job('J3a', 3), job('J3b', 3), job('J5', 5)];
    const p = planSchedule(jobs, [A, B], [], [], T0, BARE);
    expect(p.makespanEndMs - T0).toBe(8 * H); // total 16 h on 2 rigs: 8 h is the lower bound
  });

  it('capabilities decide: the humidity run goes to the humidity chamber even though it is busy', () => {
    const hc = rig('HC-05', { humidityCapable: true, maxHumidityPct: 95, maxTempC: 130 });
    const fixed: Commitment[] = [
      { runId: 'f', code: 'THB-2608-F', rigId: hc.id, startMs: T0, endMs: T0 + 3 * H, chamberC: 85, humidityPct: 85, sockets: 48 },
    ];
    const p = planSchedule([job('THB', 2, { chamberC: 85, humidityPct: 85 }), job('HTRB', 6)], [A, hc], fixed, [], T0, BARE);
    expect(p.assignments.find((a) => a.code === 'THB')).toMatchObject({ rigCode: 'HC-05', startMs: T0 + 3 * H, endMs: T0 + 5 * H });
    expect(p.assignments.find((a) => a.code === 'HTRB')).toMatchObject({ rigCode: 'OV-01', startMs: T0 });
  });

  it('a run no rig can take is reported with the reasons', () => {
    const p = planSchedule([job('BIG', 2, { sampleSize: 100 })], [A], [], [], T0, BARE);
    expect(p.unplaced).toEqual([{ jobId: 'BIG', code: 'BIG', reasons: ['Oven OV-01 holds 64 sockets; the plan needs 100.'] }]);
  });

  it('proposals: ranked by finish, then the tighter board; refusals with reasons', () => {
    const small = rig('OV-04', { socketCount: 48 });
    const busyA: Commitment = {
      runId: 'b',
      code: 'HTRB-2612-C',
      rigId: A.id,
      startMs: T0,
      endMs: T0 + 10 * H,
      chamberC: 125,
      humidityPct: null,
      sockets: 64,
    };
    const p = proposeRigs(
      needs({ durationH: 5, readPointsH: [0, 5] }),
      [A, B, small, rig('OV-03', { socketCount: 32 })],
      [busyA],
      [],
      T0,
      BARE,
    );
    expect(p.options.map((o) => [o.rigCode, (o.startMs - T0) / H, o.spareSockets])).toEqual([
      ['OV-04', 0, 3],
      ['OV-02', 0, 19],
      ['OV-01', 10, 19],
    ]);
    expect(p.options[2].delayReasons).toEqual(['Oven OV-01 runs HTRB-2612-C at 125 °C until 2026-03-02 18:00 UTC; the plan needs 150 °C.']);
    expect(p.refusals).toEqual([{ rigId: 'rig-OV-03', rigCode: 'OV-03', reasons: ['Oven OV-03 holds 32 sockets; the plan needs 45.'] }]);
  });
});

describe('hour accrual', () => {
  // [IEEE 754 double arithmetic; the 0.1 example is the classic one, e.g. Goldberg 1991, "What every
  // computer scientist should know about floating-point arithmetic"] ten 0.1 h intervals sum to
  // 0.9999999999999999 h, not 1: a read point at 1 h must count as reached on that sample.
  it('a target reached by a float sum of intervals counts on that sample, not the next', () => {
    let h = 0;
    for (let k = 0; k < 10; k++) h += 360 / 3600;
    expect(h).toBe(0.9999999999999999);
    expect(h >= 1).toBe(false); // what the run engine compared before: one sample late
    expect(reachedH(h, 1)).toBe(true);
    let h12 = 0;
    for (let k = 0; k < 60; k++) h12 += 720 / 3600; // 0.2 h samples up to a 12 h end
    expect(reachedH(h12, 12)).toBe(true);
    expect(reachedH(12 - 1e-6, 12)).toBe(false); // 3.6 ms short is short
    expect(reachedH(12 - HOURS_EPS / 2, 12)).toBe(true);
  });

  // [pub: JESD22-A103D Table 1] condition B: +150 °C, −0/+10 → 149 °C is out, 159 °C is in.
  it('a one-sided band in kelvin: 150 °C −0/+10 K → 149 out, 150 and 159 in, 160.01 out [pub: JESD22-A103D Table 1]', () => {
    const b = { belowK: 0, aboveK: 10 };
    expect(chamberBand(150, b)).toEqual({ lowC: 150, highC: 160 });
    expect(chamberWithinBand(149, 150, b)).toBe(false);
    expect(chamberWithinBand(150, 150, b)).toBe(true);
    expect(chamberWithinBand(159, 150, b)).toBe(true);
    expect(chamberWithinBand(160.01, 150, b)).toBe(false);
  });

  it('a band in kelvin at 0 °C is as wide as anywhere else (± 3 % of 0 °C was no band at all) [practice]', () => {
    const b = { belowK: 2, aboveK: 2 };
    expect(chamberWithinBand(1.5, 0, b)).toBe(true);
    expect(chamberWithinBand(-2, 0, b)).toBe(true);
    expect(chamberWithinBand(2.1, 0, b)).toBe(false);
  });

  const cond: AccrualConditions = {
    setC: 125,
    band: { belowK: 3.75, aboveK: 3.75 },
    humidityPct: null,
    biasV: 80,
    biasTolerancePct: 5,
    runNeedsBiasedSocket: true,
  };
  const on = (socket: number, vV = 80) => ({ socket, vV, biasOn: true, tripped: false });
  const s = (seq: number, clockS: number, chamberC = 125, sockets = [on(0), on(1)]): ClockSample => ({
    seq,
    clockS,
    chamberC,
    humidityPct: null,
    sockets,
  });

  it('an interval counts when the chamber held at both ends; the run and each biased socket get Δclock', () => {
    const r = accrueInterval(s(1, 0), s(2, 900), cond, [0, 1]);
    expect(r.runS).toBe(900);
    expect([...r.socketS]).toEqual([
      [0, 900],
      [1, 900],
    ]);
  });

  it('chamber out of band at either end: nothing counts [pub: MIL-STD-750 general requirements §4.5]', () => {
    expect(accrueInterval(s(1, 0, 121.2), s(2, 900), cond, [0, 1]).runS).toBe(0);
    expect(accrueInterval(s(1, 0), s(2, 900, 128.8), cond, [0, 1]).runS).toBe(0);
    expect(accrueInterval(s(1, 0, 121.25), s(2, 900, 128.75), cond, [0, 1]).runS).toBe(900);
  });

  it('per socket: bias off, tripped, or outside the bias tolerance (±5 % of 80 V = 76–84 V) does not count', () => {
    const r = accrueInterval(
      s(1, 0, 125, [on(0), on(1), on(2), on(3, 84)]),
      s(2, 600, 125, [
        { socket: 0, vV: 0, biasOn: false, tripped: false },
        { socket: 1, vV: 0, biasOn: false, tripped: true },
        on(2, 75.9),
        on(3, 84),
      ]),
      cond,
      [0, 1, 2, 3],
    );
    expect([...r.socketS]).toEqual([[3, 600]]);
    expect(r.newlyTripped).toEqual([1]);
    expect(r.runS).toBe(600);
  });

  it('the run clock stops when no socket is biased (except intermittent life, where the chamber alone counts)', () => {
    const off = [{ socket: 0, vV: 0, biasOn: false, tripped: false }];
    expect(accrueInterval(s(1, 0, 125, off), s(2, 600, 125, off), cond, [0]).runS).toBe(0);
    expect(accrueInterval(s(1, 0, 125, off), s(2, 600, 125, off), { ...cond, runNeedsBiasedSocket: false }, [0]).runS).toBe(600);
  });

  it('a negative clock step (rig reboot) accrues nothing and restarts from the new sample; a gap in seq accrues nothing', () => {
    const reboot = accrueInterval(s(5, 7200), s(6, 30), cond, [0, 1]);
    expect(reboot).toMatchObject({ runS: 0, reboot: true });
    const series = accrueSeries([s(1, 0), s(2, 3600), s(3, 60), s(4, 3660), s(6, 7260), s(7, 10860)], cond, [0, 1]);
    // 1→2: 1 h; 2→3 reboot: 0; 3→4: 1 h; 4→6 gap: 0; 6→7: 1 h
    expect(series.runH).toBe(3);
    expect(series.socketH).toEqual({ 0: 3, 1: 3 });
  });

  it('a tripped socket stays out for the rest of the run (latched), even if it reads untripped later', () => {
    const tripped = { socket: 1, vV: 0, biasOn: false, tripped: true };
    const series = accrueSeries([s(1, 0), s(2, 3600), s(3, 7200, 125, [on(0), tripped]), s(4, 10800), s(5, 14400)], cond, [0, 1]);
    expect(series.socketH).toEqual({ 0: 4, 1: 1 });
    expect(series.tripped).toEqual([1]);
    expect(series.runH).toBe(4);
  });

  it('accruing a series in pieces gives exactly the same hours as all at once (restart-exact)', () => {
    const samples = Array.from({ length: 200 }, (_, i) => s(i + 1, i * 917.3, i % 37 === 5 ? 110 : 125 + Math.sin(i) * 2));
    const whole = accrueSeries(samples, cond, [0, 1]);
    const first = accrueSeries(samples.slice(0, 77), cond, [0, 1]);
    const rest = accrueSeries(samples.slice(77), cond, [0, 1], {
      runH: first.runH,
      socketH: first.socketH,
      last: first.last,
      tripped: first.tripped,
    });
    expect(rest.runH).toBe(whole.runH);
    expect(rest.socketH).toEqual(whole.socketH);
  });

  it('humidity plans also need humidity within ±5 % RH of set [memory: JESD22-A101, 85 ± 5 % RH]', () => {
    const thb: AccrualConditions = { ...cond, setC: 85, humidityPct: 85 };
    const h = (seq: number, clockS: number, rh: number): ClockSample => ({ ...s(seq, clockS, 85), humidityPct: rh });
    expect(accrueInterval(h(1, 0, 80), h(2, 600, 90), thb, [0, 1]).runS).toBe(600);
    expect(accrueInterval(h(1, 0, 79.9), h(2, 600, 85), thb, [0, 1]).runS).toBe(0);
  });
});

describe('the bias command a plan asks of the rig', () => {
  const bias = { vcbV: null, vebV: null, vceV: null, ibA: null, icA: null, tolerancePct: 5 };
  it('reverse-bias kinds send VCB only; the rig keeps its supply current limit', () => {
    expect(planBiasSettings({ kind: 'htrb', bias: { ...bias, vcbV: 112 } })).toEqual({ vV: 112 });
    expect(planBiasSettings({ kind: 'thb', bias: { ...bias, vcbV: 80, ibA: 0.002 } })).toEqual({ vV: 80 });
  });
  it('powered kinds send VCE with the forced IB, or with the collector current the rig regulates', () => {
    expect(planBiasSettings({ kind: 'hotl', bias: { ...bias, vceV: 30, ibA: 0.0006 } })).toEqual({ vV: 30, iA: 0.0006 });
    // An IC-regulated plan: before, the command carried no current at all and the rig kept whatever
    // base drive it had, so the current the plan check judged was never asked for.
    expect(planBiasSettings({ kind: 'iol', bias: { ...bias, vceV: 20, icA: 0.5 } })).toEqual({ vV: 20, icA: 0.5 });
  });
});

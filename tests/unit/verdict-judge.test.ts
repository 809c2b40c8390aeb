/**
 * judgeLot: sample against the plan, complete read points, every failure counted, peers by
 * prediction interval or individuals chart, per-device degradation with a Weibull life.
 */
import { jStat } from 'jstat';
import { judgeLot, planConditionsKey, PEER_INTERVAL_CONFIDENCE, dateFromDateCode, type PeerLot } from '../../shared/verdict';
import { device, lotEvidence, planConditions, planEvidence, reading } from '../support/evidence';

const HOURS = [0, 168, 500, 1000];

describe('sample against the plan', () => {
  test('77 of 77 devices, every read point measured, no failure → passed', () => {
    const j = judgeLot(lotEvidence([planEvidence(77)]), []);
    expect(j.verdict).toBe('passed');
    // [REFERENCE.md A1; MIL-PRF-19500 LTPD table, from memory] 77 devices, c 0, 90 % → 2.95 %
    expect(j.plans[0].sample.planLtpd).toBeCloseTo(0.0295, 4);
    expect(j.plans[0].sample.demonstratedLtpd).toBeCloseTo(0.0295, 4);
    expect(j.reasons[0]).toBe('All 77 devices accounted for at every read point through 1,000 h; 0 failures (accept number 0).');
  });

  test('64 of 77 devices without a deviation → insufficient sample, never passed', () => {
    const j = judgeLot(lotEvidence([planEvidence(64)]), []);
    expect(j.verdict).toBe('insufficient-sample');
    // [REFERENCE.md A1] n 64, c 0, 90 % → 3.5 % (3.53 %); the plan's 77 → 2.95 %
    expect(j.reasons[0]).toBe(
      "64 of 77 devices: at 90 % confidence, 0 failures in 64 demonstrate an LTPD of 3.53 %, not the plan's 2.95 %. No sample deviation is recorded.",
    );
  });

  test('a recorded deviation says what the sample demonstrates and passes only when it meets the plan', () => {
    const deviation = { sampleSize: 64, reason: 'largest rig holds 64 sockets', by: 'Engineer One', at: '2026-04-01T09:00:00Z' };
    const c0 = judgeLot(lotEvidence([planEvidence(64, { deviation })]), []);
    expect(c0.verdict).toBe('insufficient-sample');
    expect(c0.reasons).toContain('Recorded sample deviation: 64 devices — largest rig holds 64 sockets (Engineer One, 2026-04-01).');
    // [REFERENCE.md A1 formula; jstat beta.inv] plan 77, c 1 → LTPD 4.95 %; 0 failures in 64 demonstrate 3.53 % ≤ 4.95 %
    const c1 = judgeLot(lotEvidence([planEvidence(64, { deviation, plan: { acceptNumber: 1 } })]), []);
    expect(c1.plans[0].sample.planLtpd).toBeCloseTo(jStat.beta.inv(0.9, 2, 76), 10);
    expect(c1.verdict).toBe('passed');
  });

  test('a sample split across two rigs is judged as one', () => {
    const pe = planEvidence(0);
    pe.runs = [
      { runId: 'run-a', runCode: 'R-0001', rigCode: 'OV-01', state: 'finished', stressHours: 1000 },
      { runId: 'run-b', runCode: 'R-0002', rigCode: 'OV-02', state: 'finished', stressHours: 1000 },
    ];
    pe.devices = [
      ...Array.from({ length: 64 }, (_, i) => device(i, HOURS, {}, 'run-a')),
      ...Array.from({ length: 13 }, (_, i) => device(i, HOURS, {}, 'run-b')),
    ];
    const j = judgeLot(lotEvidence([pe]), []);
    expect(j.verdict).toBe('passed');
    expect(j.plans[0].sample.booked).toBe(77);
  });
});

describe('completeness', () => {
  test('one device without its 1,000 h reading → incomplete, and the missing device is named', () => {
    const pe = planEvidence(77);
    pe.devices[5].readings = pe.devices[5].readings.filter((r) => r.readPointH !== 1000);
    const j = judgeLot(lotEvidence([pe]), []);
    expect(j.verdict).toBe('incomplete');
    expect(j.reasons[0]).toBe('Read point 1,000 h: 1 of 77 devices not accounted for (1 no reading or disposition).');
    const rp = j.plans[0].readPoints.find((r) => r.hours === 1000)!;
    expect(rp.missing).toEqual([{ serial: 'S006', why: 'no reading or disposition' }]);
    expect(rp.complete).toBe(false);
  });

  test('one device measured is not enough while the run is still going: in progress, missing listed', () => {
    const pe = planEvidence(77, { state: 'stressing', stressHours: 200 });
    for (const d of pe.devices) d.readings = d.readings.filter((r) => r.readPointH <= 168 && (r.readPointH === 0 || d.socketIndex === 0));
    const j = judgeLot(lotEvidence([pe]), []);
    expect(j.verdict).toBe('in-progress');
    const rp = j.plans[0].readPoints.find((r) => r.hours === 168)!;
    expect(rp.measured).toBe(1);
    expect(rp.missing).toHaveLength(76);
    expect(j.plans[0].readPoints.find((r) => r.hours === 500)!.due).toBe(false);
  });

  test('a split sample: a read point is due only when every run has reached it', () => {
    const pe = planEvidence(0, { plan: { sampleSize: 20 } });
    pe.runs = [
      { runId: 'run-a', runCode: 'R-0001', rigCode: 'OV-01', state: 'stressing', stressHours: 520 },
      { runId: 'run-b', runCode: 'R-0002', rigCode: 'OV-02', state: 'stressing', stressHours: 400 },
    ];
    pe.devices = [
      ...Array.from({ length: 10 }, (_, i) => device(i, [0, 168, 500], {}, 'run-a')),
      ...Array.from({ length: 10 }, (_, i) => device(i, [0, 168], {}, 'run-b')),
    ];
    const j = judgeLot(lotEvidence([pe]), []);
    expect(j.plans[0].readPoints.map((r) => [r.hours, r.due, r.complete])).toEqual([
      [0, true, true],
      [168, true, true],
      [500, false, false],
      [1000, false, false],
    ]);
    expect(j.verdict).toBe('in-progress');
    expect(j.reasons[0]).toBe('Runs R-0001 at 520 h + R-0002 at 400 h; read points 500 / 1000 h still to come.');
  });

  test('a lost device is accounted for but leaves the sample (76 of 77 → insufficient sample)', () => {
    const pe = planEvidence(77);
    pe.devices[3].readings = pe.devices[3].readings.filter((r) => r.readPointH < 500);
    pe.devices[3].dispositions = [
      { kind: 'lost', readPointH: 500, reason: 'dropped at unload', by: 'Operator One', at: '2026-05-02T08:00:00Z' },
    ];
    const j = judgeLot(lotEvidence([pe]), []);
    expect(j.plans[0].readPoints.every((r) => r.complete)).toBe(true);
    expect(j.verdict).toBe('insufficient-sample');
    expect(j.plans[0].devices[3].removedBecause).toBe('lost at 500 h: dropped at unload (Operator One, 2026-05-02)');
    expect(j.plans[0].sample.judged).toBe(76);
  });

  test('a reading measured under other conditions is not judged until confirmed', () => {
    const flagged = planEvidence(77);
    flagged.devices[0].readings[3] = reading(1000, {
      hfe: 60,
      measuredC: 35,
      conditionDifferences: ['measured at 35 °C, time zero at 25 °C'],
    });
    const j = judgeLot(lotEvidence([flagged]), []);
    expect(j.verdict).toBe('incomplete');
    expect(j.plans[0].readPoints[3].awaitingConfirmation).toBe(1);
    flagged.devices[0].readings[3].confirmed = {
      by: 'Engineer One',
      at: '2026-05-03T08:00:00Z',
      note: 'handler set to 35 °C by mistake, value stands',
    };
    const confirmed = judgeLot(lotEvidence([flagged]), []);
    // hFE 60 at 35 °C referred to 25 °C with XTB 1.5: 60/(308.15/298.15)^1.5 = 57.1, −42.9 % → failure
    expect(confirmed.verdict).toBe('failed');
  });
});

describe('failures', () => {
  test('an open device is a failure at its read point', () => {
    const pe = planEvidence(77);
    pe.devices[10].readings[2] = reading(500, { result: 'open', hfe: null, icboA: null, vcesatV: null, bvceoV: null });
    pe.devices[10].readings = pe.devices[10].readings.filter((r) => r.readPointH <= 500);
    const j = judgeLot(lotEvidence([pe]), []);
    expect(j.verdict).toBe('failed');
    expect(j.plans[0].devices[10].failedAtH).toBe(500);
    expect(j.plans[0].readPoints.every((r) => r.complete)).toBe(true);
    expect(j.reasons[0]).toBe('1 device failed, accept number 0: S011 at 500 h (open at 500 h).');
  });

  test('a trip: undecided → incomplete; counted → failed; re-seated → judged on its readings', () => {
    const pe = planEvidence(77);
    const d = pe.devices[7];
    d.readings = d.readings.filter((r) => r.readPointH <= 168);
    d.creditedHours = 250;
    d.trip = { atH: 250, at: '2026-04-20T00:00:00Z', reason: 'leakage runaway' };
    const undecided = judgeLot(lotEvidence([pe]), []);
    expect(undecided.verdict).toBe('incomplete');
    expect(undecided.plans[0].devices[7].missing[0]).toEqual({
      hours: 500,
      why: 'socket tripped at 250 h; failure, re-seat or exclusion not yet recorded',
    });
    d.dispositions = [
      { kind: 'trip-failure', readPointH: 500, reason: 'collector-base short', by: 'Engineer One', at: '2026-04-21T00:00:00Z' },
    ];
    const failed = judgeLot(lotEvidence([pe]), []);
    expect(failed.verdict).toBe('failed');
    expect(failed.plans[0].devices[7].failedAtH).toBe(500);
    // FIT exposure from each device's credited hours: 76 × 1000 h + 250 h, not 77 × 1000 h
    expect(failed.plans[0].exposure.deviceHours).toBe(76 * 1000 + 250);
    d.dispositions = [
      { kind: 'reseated', readPointH: 500, reason: 'contact spring bent, re-seated', by: 'Operator One', at: '2026-04-21T00:00:00Z' },
    ];
    d.readings = HOURS.map((h) => reading(h));
    expect(judgeLot(lotEvidence([pe]), []).verdict).toBe('passed');
  });

  test('data-sheet limits: BVCEO below its minimum fails, and the words name the limit', () => {
    const limits = {
      hfeMin: 40,
      hfeMax: 250,
      icboMaxA: 50e-9,
      vcesatMaxV: null,
      bvceoMinV: 80,
      atC: 25,
      hfeIcA: 0.15,
      hfeVceV: 5,
      icboVcbV: 60,
    };
    const pe = planEvidence(77, { plan: { criteria: { ...planConditions().criteria, limits } } });
    pe.devices[2].readings[3] = reading(1000, { bvceoV: 72 });
    const j = judgeLot(lotEvidence([pe]), []);
    expect(j.verdict).toBe('failed');
    expect(j.plans[0].devices[2].failedBecause).toEqual(["BVCEO 72 V below the data sheet's 80 V (25 °C) at 1,000 h"]);
    pe.devices[2].readings[3] = reading(1000, { icboA: 60e-9 });
    expect(judgeLot(lotEvidence([pe]), []).plans[0].devices[2].failedBecause).toEqual([
      "ICBO 60 nA above the data sheet's 50 nA (VCB 60 V, 25 °C) at 1,000 h",
    ]);
  });
});

describe('peers', () => {
  const key = planConditionsKey(planConditions());
  const peer = (i: number, value: number, date: string): PeerLot => ({
    lotId: `peer-${i}`,
    lotCode: `HPD-L-1${String(i).padStart(2, '0')}`,
    productionDate: date,
    conditionsKey: key,
    values: [{ parameter: 'hfe', readPointH: 1000, value }],
  });
  const drifted = () => {
    const pe = planEvidence(77);
    for (const d of pe.devices) d.readings[3] = reading(1000, { hfe: 95 }); // −5 %
    return pe;
  };

  test('3 peer lots: a prediction interval, limits shown; the lot outside is drifting', () => {
    const peers = [peer(1, -1.0, '2026-01-05'), peer(2, -1.4, '2026-02-02'), peer(3, -0.8, '2026-03-02')];
    const j = judgeLot(lotEvidence([drifted()]), peers);
    const c = j.plans[0].peers.find((x) => x.parameter === 'hfe')!;
    expect(c.method).toBe('prediction-interval');
    // [REFERENCE.md A2 formula, Hahn & Meeker 1991; jstat studentt.inv] x̄ ± t(0.99865; 2)·s·√(1 + 1/3)
    const xs = [-1.0, -1.4, -0.8];
    const m = xs.reduce((a, b) => a + b) / 3;
    const s = Math.sqrt(xs.reduce((a, b) => a + (b - m) ** 2, 0) / 2);
    const half = jStat.studentt.inv(1 - (1 - PEER_INTERVAL_CONFIDENCE) / 2, 2) * s * Math.sqrt(1 + 1 / 3);
    expect(c.lower).toBeCloseTo(m - half, 10);
    expect(c.upper).toBeCloseTo(m + half, 10);
    expect(c.outOfLimits).toBe(false); // −5 % lies inside the very wide interval from 3 lots
    const tight = [peer(1, -1.0, '2026-01-05'), peer(2, -1.02, '2026-02-02'), peer(3, -0.98, '2026-03-02')];
    const j2 = judgeLot(lotEvidence([drifted()]), tight);
    expect(j2.verdict).toBe('drifting');
    expect(j2.reasons[0]).toMatch(/^Mean hFE change at 1,000 h \(-5 %\) is outside the 99\.73 % prediction interval from 3 peer lots/);
  });

  test('peers under other conditions do not count', () => {
    const other = { ...peer(1, -1, '2026-01-05'), conditionsKey: planConditionsKey(planConditions({ chamberC: 125 })) };
    const j = judgeLot(lotEvidence([drifted()]), [other, peer(2, -1, '2026-02-01')]);
    const c = j.plans[0].peers.find((x) => x.parameter === 'hfe')!;
    expect(c.method).toBeNull();
    expect(c.note).toBe('Needs at least 2 peer lots stressed under the same conditions and measured at 1,000 h; 1 found.');
  });

  test('20 peer lots: individuals chart in production order', () => {
    const values = Array.from({ length: 20 }, (_, i) => -1 + 0.1 * Math.sin(i));
    // production dates out of code order on purpose
    const peers = values.map((v, i) => peer(i, v, `2025-${String(12 - Math.floor(i / 2)).padStart(2, '0')}-${10 + (i % 2)}`));
    const j = judgeLot(lotEvidence([drifted()]), peers);
    const c = j.plans[0].peers.find((x) => x.parameter === 'hfe')!;
    expect(c.method).toBe('individuals-chart');
    const ordered = [...peers].sort((a, b) => a.productionDate!.localeCompare(b.productionDate!)).map((p) => p.values[0].value);
    const mr = ordered.slice(1).map((v, i) => Math.abs(v - ordered[i]));
    const mrBar = mr.reduce((a, b) => a + b) / mr.length;
    const centre = ordered.reduce((a, b) => a + b) / ordered.length;
    // [Montgomery, Introduction to Statistical Quality Control, individuals chart: x̄ ± 2.66·MR̄]
    expect(c.upper).toBeCloseTo(centre + 2.66 * mrBar, 10);
    expect(c.peers.map((p) => p.value)).toEqual(ordered);
    expect(j.verdict).toBe('drifting');
  });

  test('dateFromDateCode: YYWW → the Monday of that ISO week (common practice)', () => {
    // ISO 8601 week dates: week 14 of 2026 starts Monday 30 March; week 1 of 2026 starts 29 December 2025
    expect(dateFromDateCode('2614')).toBe('2026-03-30');
    expect(dateFromDateCode('2601')).toBe('2025-12-29');
    expect(dateFromDateCode('L26')).toBeNull();
  });
});

describe('degradation per device', () => {
  // [REFERENCE.md A3; NIST/SEMATECH e-Handbook §8.4.2.3] ΔhFE % at 168/500/1000 h for five devices,
  // b = Σty/Σt², limit −20 % → 2213.0, 1266.4, 3249.2, 1672.4, 1091.5 h
  const paths = [
    [-1.5, -4.4, -9.1],
    [-2.6, -7.9, -15.8],
    [-1.0, -3.2, -6.1],
    [-2.0, -6.1, -11.9],
    [-3.1, -9.0, -18.4],
  ];
  const evidence = (extraSurvivors = 0) => {
    const devices = paths.map((p, i) =>
      device(i, HOURS, { readings: HOURS.map((h, k) => reading(h, { hfe: k === 0 ? 100 : 100 * (1 + p[k - 1] / 100) })) }),
    );
    for (let i = 0; i < extraSurvivors; i++) devices.push(device(5 + i, HOURS));
    return lotEvidence([
      planEvidence(0, {
        devices,
        plan: { sampleSize: devices.length, criteria: { hfeChangePct: 20, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 } },
      }),
    ]);
  };

  test('pseudo-failure time per device', () => {
    const d = judgeLot(evidence(), []).plans[0].degradation.devices;
    const expected = [2213.0, 1266.4, 3249.2, 1672.4, 1091.5];
    d.forEach((x, i) => {
      expect(x.pseudoFailureH!).toBeCloseTo(expected[i], 0);
      expect(x.parameter).toBe('hfe');
      expect(x.life).toEqual({ kind: 'failure', hours: x.pseudoFailureH, why: 'hFE path reaches its limit' });
    });
  });

  test('Weibull fitted to the pseudo-failure times', () => {
    const deg = judgeLot(evidence(), []).plans[0].degradation;
    // [scipy 1.17 stats.weibull_min.fit(times, floc=0)] β 2.63075, η 2145.95 h; F(1000 h) 0.12554
    expect(deg.weibull!.beta).toBeCloseTo(2.63075, 3);
    expect(deg.weibull!.eta).toBeCloseTo(2145.95, 0);
    expect(deg.weibull!.fractionByTargetLife).toBeCloseTo(0.12554, 4);
  });

  test('devices that reach no limit within 5× their last read point are suspensions there', () => {
    const deg = judgeLot(evidence(2), []).plans[0].degradation;
    expect(deg.devices[5].life).toEqual({ kind: 'suspension', hours: 5000, why: 'no limit reached within 5× its last read point' });
    // [scipy 1.17 weibull_min.fit(CensoredData(uncensored=5 times, right=[5000, 5000]), floc=0)] β 1.39978, η 3753.90 h
    expect(deg.weibull!.beta).toBeCloseTo(1.39978, 3);
    expect(deg.weibull!.eta).toBeCloseTo(3753.9, 0);
    expect(deg.weibull!.suspensions).toBe(2);
  });

  test('a lot projected to lose more than its LTPD by the target life is drifting', () => {
    // 77 devices following the five paths in turn: every device within ±20 % at 1,000 h, yet the
    // fitted life puts ~12 % of them past the limit by 1,000 h, above the plan's 2.95 % LTPD
    const devices = Array.from({ length: 77 }, (_, i) =>
      device(i, HOURS, { readings: HOURS.map((h, k) => reading(h, { hfe: k === 0 ? 100 : 100 * (1 + paths[i % 5][k - 1] / 100) })) }),
    );
    const j = judgeLot(
      lotEvidence([
        planEvidence(0, {
          devices,
          plan: { criteria: { hfeChangePct: 20, leakageMultiple: 2, leakageFloorA: 200e-9, vcesatShiftV: 0.05 } },
        }),
      ]),
      [],
    );
    expect(j.plans[0].devices.every((d) => d.status === 'pass')).toBe(true);
    expect(j.verdict).toBe('drifting');
    expect(j.reasons[0]).toMatch(
      /^Degradation: Weibull β [\d.]+, η [\d,]+ h from 77 pseudo-failure times and 0 suspensions; 1\d\.\d % projected to fail by the plan's 1,000 h, at or above the plan's LTPD of 2\.95 %\.$/,
    );
  });

  test('five degrading devices of five: 12.6 % by 1,000 h is below the 36.9 % that 5 devices demonstrate, so not drifting', () => {
    // [REFERENCE.md A1 formula] n 5, c 0, 90 %: 1 − 0.1^(1/5) = 36.9 %
    const j = judgeLot(evidence(), []);
    expect(j.plans[0].sample.planLtpd).toBeCloseTo(0.369, 3);
    expect(j.verdict).toBe('passed');
  });
});

describe('degradation without a Weibull fit', () => {
  test('every device crossing at one time (no spread): the share of devices by the target life decides', () => {
    // −20 % per 1,000 h, measured to 500 h, limit ±15 %: each path through the origin reaches −15 % at
    // 750 h [NIST/SEMATECH e-Handbook §8.4.2.3 method; hand calculation 15/20 × 1,000 h]
    const hours = [0, 168, 500];
    const devices = Array.from({ length: 10 }, (_, i) =>
      device(i, hours, { readings: hours.map((h) => reading(h, { hfe: 100 * (1 - (20 * h) / 1000 / 100) })) }),
    );
    const pe = planEvidence(0, { devices, plan: { sampleSize: 10 }, state: 'stressing', stressHours: 560 });
    const j = judgeLot(lotEvidence([pe]), []);
    const deg = j.plans[0].degradation;
    expect(deg.weibull).toBeNull();
    expect(deg.devices[0].pseudoFailureH!).toBeCloseTo(750, 6);
    expect(deg.projectedBy).toBe('share of devices');
    expect(deg.projectedFraction).toBe(1);
    expect(j.verdict).toBe('drifting');
    expect(j.reasons[0]).toMatch(
      /10 of 10 devices projected to reach a limit by the plan's 1,000 h \(100 %\), at or above the plan's LTPD of 20\.6 %\.$/,
    );
  });
});

describe('several plans', () => {
  test('each plan judged, the combined verdict is the worst', () => {
    const htrb = planEvidence(77);
    const hotl = planEvidence(77, {
      plan: { planId: 'plan-2', name: 'Operating life 1,000 h', kind: 'hotl', chamberC: 25 },
      state: 'stressing',
      stressHours: 300,
    });
    const j = judgeLot(lotEvidence([htrb, hotl]), []);
    expect(j.plans.map((p) => p.verdict)).toEqual(['passed', 'in-progress']);
    expect(j.verdict).toBe('in-progress');
    expect(j.reasons[0]).toBe('Stressed under 2 plans: HTRB 150 °C passed; Operating life 1,000 h in-progress.');
  });

  test('no plans → untested', () => {
    expect(judgeLot(lotEvidence([]), []).verdict).toBe('untested');
  });
});

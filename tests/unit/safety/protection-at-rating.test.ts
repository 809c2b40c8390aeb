/**
 * Live protection at rating (issue #20 item 4): an HTRB board with its chamber 10 °C under Tj max,
 * healthy sockets spread by the oven (σ 4 °C) and a few dies whose leakage runs away. The board is
 * rig-simulator/htrb-board.ts (leakage doubling per 10 °C — common practice; single-node thermal
 * model, θjc per JEDEC JESD51); the judge is the monitor's own SocketJudge, fed message by message
 * with the peers' median as baseline (bench/lib/at-rating.ts, which the bench's protection.atRating
 * runs too). Seeds are fixed: every case below is reproducible.
 */
import { jStat } from 'jstat';
import { assessSocket, type SocketSample } from '../../../shared/safety';
import { HtrbBoard, type HtrbBoardSpec } from '../../../rig-simulator/htrb-board';
import { judgeHtrbBoard } from '../../../bench/lib/at-rating';
import { mulberry32 } from '../../../shared/random';

const BOARD: Omit<HtrbBoardSpec, 'seed' | 'injected'> = {
  sockets: 32,
  chamberC: 140,
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
};

/** Three degrading dies per board, different onsets and growth rates, drawn from the seed. */
function injectedFor(seed: number): HtrbBoardSpec['injected'] {
  const rand = mulberry32(seed * 7919);
  const picks = new Set<number>();
  while (picks.size < 3) picks.add(Math.floor(rand() * BOARD.sockets));
  return [...picks].map((socket) => ({ socket, onsetS: 300 + Math.round(rand() * 900), growthDoublingS: 30 + Math.round(rand() * 90) }));
}

describe('oven spread at rating is not runaway', () => {
  const seeds = [101, 102, 103, 104, 105, 106];
  const runs = seeds.map((seed) => judgeHtrbBoard({ ...BOARD, seed, injected: [] }, 3600));

  test('6 boards × 32 healthy sockets, 1 stress hour at 1 Hz with the oven swinging ± 0.5 °C: no trip', () => {
    const tripped = runs.flatMap((r) => r.sockets.filter((s) => s.trippedAtS !== null).map((s) => `${s.socket}: ${s.reason}`));
    expect(tripped).toEqual([]);
    // The spread is real: sockets up to 8 °C (2σ) above the chamber, none at Tj max.
    const offsets = runs.flatMap((r) => r.sockets.map((s) => s.offsetC));
    expect(Math.max(...offsets)).toBeGreaterThan(6);
    expect(Math.max(...runs.flatMap((r) => r.sockets.map((s) => s.peakTjC)))).toBeLessThan(150);
  });

  test('the peer rule this replaced would have tripped at least the share the issue cites for σ = 3 °C', () => {
    // [ref: jStat] P(Z ≥ 3/3) = 1 − Φ(1) = 15.87 %: sockets ≥ 3 °C above the median within 10 °C of Tj max
    const lower = 1 - jStat.normal.cdf(1, 0, 1);
    expect(lower).toBeCloseTo(0.1587, 4);
    const all = runs.flatMap((r) => r.sockets);
    const flagged = all.filter((s) => s.peerRuleSamples > 0).length;
    expect(flagged / all.length).toBeGreaterThan(lower);
  });

  test('a socket 5 °C above the chamber with reverse-bias milliwatts is not read as a huge loop gain (θca bounded by θja − θjc)', () => {
    const rand = mulberry32(42);
    const samples: SocketSample[] = Array.from({ length: 300 }, (_, k) => {
      const tj = 145 + 0.3 * Math.sin(k / 20);
      // leakage doubling per 10 °C (common practice): 10 nA at 25 °C
      const i = 10e-9 * Math.pow(2, (tj - 25) / 10);
      return { tS: k, caseC: tj + 0.2 * (rand() - 0.5), vV: 160, iA: i, chamberC: 140, biasOn: true };
    });
    const a = assessSocket(samples, { tjMaxC: 150, thetaJcCPerW: 1.5, thetaJaCPerW: 62 });
    // [pub: textbook thermal-stability criterion] true G = θ·V·I·ln2/10 with θ ≤ θja = 62 °C/W:
    // 62 × 160 V × 41 µA × 0.0693 ≈ 0.028
    expect(a.loopGain === null || a.loopGain < 0.05).toBe(true);
    expect(a.action).not.toBe('trip');
  });
});

describe('a failing heat path far beyond the board spread', () => {
  // A steady socket: 5 min of samples at one junction temperature (noise ±0.1 °C).
  const steady = (tjC: number): SocketSample[] =>
    Array.from({ length: 300 }, (_, k) => ({
      tS: k,
      caseC: tjC - 1.5 * 20 * 0.1 + 0.1 * Math.sin(k),
      vV: 20,
      iA: 0.1,
      chamberC: 100,
      biasOn: true,
    }));
  const device = { tjMaxC: 150, thetaJcCPerW: 1.5, thetaJaCPerW: 62 };

  test('30 °C above its peers (spread ±4 °C) within 10 °C of Tj max trips, steady or not', () => {
    const a = assessSocket(steady(145), device, { baselineTjC: 115, peerSpreadC: 4 });
    expect(a.action).toBe('trip');
    // Tj = case + θjc·P = 145 °C ± the 0.1 °C ripple of the last sample
    expect(a.tjC!).toBeCloseTo(145, 0);
    expect(a.reason).toMatch(
      /is within 10 °C of the rating and (29|30)\.\d °C above its peers, beyond the board's spread \(±4\.0 °C\): its heat path is failing$/,
    );
  });

  test('8 °C above its peers (spread ±4 °C: 2σ) is spread; 12 °C above with spread ±4 °C is under 4σ = 16 °C; neither trips', () => {
    expect(assessSocket(steady(148), device, { baselineTjC: 140, peerSpreadC: 4 }).action).toBe('none');
    expect(assessSocket(steady(145), device, { baselineTjC: 133, peerSpreadC: 4 }).action).toBe('none');
    // With a tight board (±0.3 °C) the floor of 10 °C applies: 11 °C above trips, 9 °C does not.
    expect(assessSocket(steady(145), device, { baselineTjC: 134, peerSpreadC: 0.3 }).action).toBe('trip');
    expect(assessSocket(steady(145), device, { baselineTjC: 136, peerSpreadC: 0.3 }).action).toBe('none');
    // Without peers (no spread known) the rule does not apply.
    expect(assessSocket(steady(145), device, { baselineTjC: 115 }).action).toBe('none');
  });
});

describe('leakage runaways at rating are tripped before Tj max', () => {
  const seeds = [201, 202, 203, 204, 205, 206];

  test.each(seeds)('board seed %i: every injected die tripped below Tj max, no healthy socket tripped', (seed) => {
    const spec: HtrbBoardSpec = { ...BOARD, seed, injected: injectedFor(seed) };
    // Without protection every injected die passes Tj max within the hour.
    const alone = new HtrbBoard(spec);
    const peak = new Array<number>(spec.sockets).fill(0);
    for (let t = 0; t < 3600; t++) alone.next().trueTjC.forEach((tj, i) => (peak[i] = Math.max(peak[i], tj)));
    for (const r of spec.injected) expect(peak[r.socket]).toBeGreaterThan(150);

    const run = judgeHtrbBoard(spec, 3600);
    const injected = run.sockets.filter((s) => s.injected);
    expect(injected).toHaveLength(3);
    for (const s of injected) {
      expect(s.trippedAtS).not.toBeNull();
      // [pub: textbook thermal-stability criterion] tripped while the true junction is below Tj max
      expect(s.tjAtTripC!).toBeLessThan(150);
      expect(s.peakTjC).toBeLessThan(150);
      expect(s.reason).toMatch(/loop gain|projected|climbing/);
    }
    expect(run.sockets.filter((s) => !s.injected && s.trippedAtS !== null).map((s) => s.reason)).toEqual([]);
  });
});

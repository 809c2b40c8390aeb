/**
 * An HTRB board held at its rating, for judging live protection against the two things it must
 * tell apart: oven spread (healthy sockets sitting a few kelvin above or below their peers, steady)
 * and leakage runaway (a die whose leakage and temperature feed each other). Pure and seeded:
 * the same spec gives the same samples. Used by tests/unit/safety/protection-at-rating.test.ts and
 * the bench's protection.atRating (bench/scenarios/protection-at-rating.ts).
 *
 * Per socket:
 * - Local ambient = chamber (with the oven's control swing, a sine) + offset, offset ~ N(0, spreadSigmaC) clipped at ±spreadClipSigma·σ:
 *   oven non-uniformity. A socket whose spot in the oven puts it past Tj max is over its rating
 *   and the hard limit trips it by design, so the clip keeps healthy sockets below it.
 * - Reverse bias V; leakage I(T) = I_ref · 2^((T − 25 °C)/doublingC) (shared/physics
 *   leakageAtTemperature; doubling per ~10 °C is common practice).
 * - Single-node thermal model τ·dTj/dt = Ta + θ·P − Tj, θ = θjc + θca, case = Tj − θjc·P
 *   (JEDEC JESD51 definitions for θjc), Euler steps of `stepS`.
 * - Injected runaway: from `onsetS` the die's leakage grows ×2 every `growthDoublingS` (a
 *   degrading junction), so its loop gain G = θ·P·ln2/doublingC rises through 1 and, left alone,
 *   the junction runs far past Tj max.
 * A trip removes bias from the socket (P = 0) until `reset`.
 */
import { leakageAtTemperature } from '../shared/physics';
import { mulberry32 } from '../shared/random';

export interface InjectedRunaway {
  socket: number;
  onsetS: number;
  growthDoublingS: number;
}

export interface HtrbBoardSpec {
  sockets: number;
  chamberC: number;
  spreadSigmaC: number;
  spreadClipSigma: number;
  tjMaxC: number;
  thetaJcCPerW: number;
  thetaCaCPerW: number;
  tauS: number;
  vV: number;
  /** Leakage at 25 °C, A, and °C per doubling. */
  iRefA: number;
  doublingC: number;
  sampleS: number;
  /** σ of the case reading (°C) and relative σ of the current reading. */
  caseNoiseC: number;
  currentNoise: number;
  seed: number;
  injected: InjectedRunaway[];
  /** Integration step, s (default 0.1). */
  stepS?: number;
  /** The oven's control swing: amplitude (°C) and period (s) of a sine on the chamber (default none). */
  chamberSwingC?: number;
  chamberSwingPeriodS?: number;
}

/** One sample of the whole board: columns, element k = socket k. */
export interface HtrbBoardSample {
  tS: number;
  chamberC: number;
  caseC: number[];
  vV: number[];
  iA: number[];
  biasOn: boolean[];
  /** The true junction temperature (the model's, not a reading). */
  trueTjC: number[];
}

function gaussian(rand: () => number): number {
  return Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

export class HtrbBoard {
  readonly offsetsC: number[];
  readonly tjC: number[];
  readonly tripped: boolean[];
  private readonly growth: Array<InjectedRunaway | undefined>;
  private readonly rand: () => number;
  private tS = 0;

  constructor(readonly spec: HtrbBoardSpec) {
    this.rand = mulberry32(spec.seed);
    const clip = spec.spreadClipSigma * spec.spreadSigmaC;
    this.offsetsC = Array.from({ length: spec.sockets }, () => Math.max(-clip, Math.min(clip, spec.spreadSigmaC * gaussian(this.rand))));
    this.tripped = new Array<boolean>(spec.sockets).fill(false);
    this.growth = Array.from({ length: spec.sockets }, (_, i) => spec.injected.find((r) => r.socket === i));
    // Start at each socket's steady state with its nominal die.
    this.tjC = this.offsetsC.map((o) => spec.chamberC + o);
  }

  /** Leakage of socket i at Tj now (A). */
  leakageA(i: number, tjC: number, tS = this.tS): number {
    const s = this.spec;
    const g = this.growth[i];
    const factor = g && tS > g.onsetS ? Math.pow(2, (tS - g.onsetS) / g.growthDoublingS) : 1;
    return leakageAtTemperature({ iRefA: s.iRefA, tRefC: 25, tC: tjC, doublingC: s.doublingC }) * factor;
  }

  /** Loop gain θ·∂P/∂Tj of socket i now (the true value: θ·V·I·ln2/doublingC). */
  loopGain(i: number): number {
    const s = this.spec;
    if (this.tripped[i]) return 0;
    return ((s.thetaJcCPerW + s.thetaCaCPerW) * s.vV * this.leakageA(i, this.tjC[i]) * Math.LN2) / s.doublingC;
  }

  chamberAt(tS: number): number {
    const s = this.spec;
    const swing = s.chamberSwingC ?? 0;
    return swing ? s.chamberC + swing * Math.sin((2 * Math.PI * tS) / (s.chamberSwingPeriodS ?? 600)) : s.chamberC;
  }

  trip(i: number): void {
    this.tripped[i] = true;
  }

  reset(i: number): void {
    this.tripped[i] = false;
  }

  /** Advance one sample period and read the board. */
  next(): HtrbBoardSample {
    const s = this.spec;
    const h = s.stepS ?? 0.1;
    const steps = Math.max(1, Math.round(s.sampleS / h));
    const theta = s.thetaJcCPerW + s.thetaCaCPerW;
    for (let k = 0; k < steps; k++) {
      const chamber = this.chamberAt(this.tS);
      for (let i = 0; i < s.sockets; i++) {
        const p = this.tripped[i] ? 0 : s.vV * this.leakageA(i, this.tjC[i]);
        const ta = chamber + this.offsetsC[i];
        this.tjC[i] = Math.min(1000, this.tjC[i] + (h * (ta + theta * p - this.tjC[i])) / s.tauS);
      }
      this.tS += h;
    }
    const n = s.sockets;
    const out: HtrbBoardSample = {
      tS: Math.round(this.tS * 1000) / 1000,
      chamberC: this.chamberAt(this.tS) + 0.1 * gaussian(this.rand),
      caseC: new Array<number>(n),
      vV: new Array<number>(n),
      iA: new Array<number>(n),
      biasOn: new Array<boolean>(n),
      trueTjC: this.tjC.slice(),
    };
    for (let i = 0; i < n; i++) {
      const on = !this.tripped[i];
      const iA = on ? this.leakageA(i, this.tjC[i]) : 0;
      out.caseC[i] = this.tjC[i] - s.thetaJcCPerW * s.vV * iA + s.caseNoiseC * gaussian(this.rand);
      out.vV[i] = on ? s.vV : 0;
      out.iA[i] = iA * (1 + s.currentNoise * gaussian(this.rand));
      out.biasOn[i] = on;
    }
    return out;
  }
}

/**
 * The look-back window of one socket for live protection, kept incrementally: every estimator
 * assessSocket needs (the quadratic trend of Tj, θca through the origin, the line of P on the case
 * temperature and the case span) comes from running sums that a new sample adds to and a sample
 * leaving the window subtracts from, so judging a socket costs the same whatever the window holds.
 * Re-fitting the whole window on every sample made protection the most expensive step of ingest
 * (35–90 µs per socket-sample with 300-sample windows).
 *
 * Numerics: the sums are taken about an anchor (time, Tj, case and power of the oldest sample when
 * they were last rebuilt) with time scaled by the window length, so every term stays small and the
 * normal equations well conditioned; the sums are rebuilt from the ring buffer (O(n)) whenever the
 * oldest sample has moved a full window past the anchor, which also bounds the rounding that
 * add/subtract accumulates. The result equals a batch least-squares fit of the same samples to
 * ~1e-9 (tests/unit/safety/socket-trend.test.ts checks it against simple-statistics and exact
 * polynomials).
 */

export interface TrendSample {
  /** Stress-clock time, seconds. */
  tS: number;
  caseC: number;
  /** |V|, V. */
  vV: number;
  /** |I|, A. */
  iA: number;
  chamberC: number;
  biasOn: boolean;
}

export interface QuadFit {
  /** Fitted Tj at the latest sample. */
  c0: number;
  /** dTj/dt at the latest sample, °C/s, and its standard error. */
  slope: number;
  slopeSe: number;
  /** d²Tj/dt², °C/s², and its standard error. */
  accel: number;
  accelSe: number;
}

export interface CaseRegression {
  /** Samples in the window. */
  n: number;
  /** Σ P² (W²) and Σ (T_case − T_chamber)·P: θca through the origin = ratio. */
  sumP2: number;
  sumRiseP: number;
  /** max − min of the case temperature over the window. */
  caseSpanC: number;
  /** Least-squares line P = b + s·T_case: slope s (W/°C), its residual sum of squares and Σ(c − c̄)². */
  slope: number;
  rss: number;
  sxx: number;
}

const MIN_CAPACITY = 16;

/** Slots of SocketTrend.quadraticFitTo's output (the fields of QuadFit). */
export const FIT_C0 = 0;
export const FIT_SLOPE = 1;
export const FIT_SLOPE_SE = 2;
export const FIT_ACCEL = 3;
export const FIT_ACCEL_SE = 4;
export const FIT_LEN = 5;
/** Slots of SocketTrend.caseRegressionTo's output (the fields of CaseRegression). */
export const REG_N = 0;
export const REG_SUM_P2 = 1;
export const REG_SUM_RISE_P = 2;
export const REG_CASE_SPAN = 3;
export const REG_SLOPE = 4;
export const REG_RSS = 5;
export const REG_SXX = 6;
export const REG_LEN = 7;
/** Start with room for this many samples (5 × 8 bytes each): a 1 Hz window of 300 s needs no regrowth. */
const INITIAL_CAPACITY = 512;

/** Fields of one sample in SocketTrend's ring buffer (interleaved: one sample = STRIDE numbers). */
const F_T = 0;
const F_CASE = 1;
const F_POWER = 2;
/** T_case − T_chamber. */
const F_RISE = 3;
const STRIDE = 4;
/** Absolute sample indices are renumbered (by a multiple of the capacity) before they reach this. */
const RENUMBER_AT = 0x40000000;

export class SocketTrend {
  /**
   * Ring buffer of the window (continuous bias-on stretch within windowS), absolute indices
   * [start, end), the fields of one sample side by side. Live protection pushes one sample into
   * each of thousands of sockets in turn, so every push reaches memory that has left the cache
   * since; one buffer with the sample's fields together costs one or two cache lines per push
   * where separate arrays per field cost several (measured: bench/README.md).
   */
  private cap: number;
  private buf: Float64Array;
  private start = 0;
  private end = 0;
  /**
   * Monotonic deques of absolute indices for the case minimum and maximum: rings of `cap` slots,
   * entries [head, tail). They hold indices of the window only, so never more than `cap`.
   */
  private minQ: Int32Array;
  private maxQ: Int32Array;
  private minHead = 0;
  private minTail = 0;
  private maxHead = 0;
  private maxTail = 0;

  // Anchor and scale of the sums.
  private t0 = 0;
  private y0 = 0;
  private c0 = 0;
  private p0 = 0;
  private scale = 1;
  private opsSinceRebuild = 0;

  // Σ u^k (k = 0…4), Σ u^k·y (k = 0…2), Σ y²  with u = (t − t0)/scale, y = Tj − y0.
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;
  private s4 = 0;
  private q0 = 0;
  private q1 = 0;
  private q2 = 0;
  private yy = 0;
  // Power and case: c = case − c0, p = P − p0 (line fit); raw Σ P², Σ (case − chamber)·P (θca).
  private sc = 0;
  private scc = 0;
  private sp = 0;
  private spp = 0;
  private scp = 0;
  private rawP2 = 0;
  private rawRiseP = 0;

  /**
   * The latest sample pushed (bias on or off): whether there is one since the last reset, its time
   * and bias. Kept as numbers, not the sample object, so samples die young (the window holds
   * thousands of sockets; one retained object each was steady old-generation garbage).
   */
  hasLast = false;
  lastTS = NaN;
  lastBiasOn = false;
  lastChamberC = NaN;
  /** Its junction estimate: T_case + θjc·P with bias on, else T_case. */
  lastTjC = 0;
  /** θjc of the window's junction estimates (Tj = T_case + θjc·P, computed when summed). */
  private thetaJc = NaN;

  constructor(
    /** Look-back, stress-clock seconds. */
    readonly windowS: number,
    /** Samples kept at most (the oldest leave first). */
    readonly maxSamples: number = 600,
    /** Renumber absolute indices once they reach this (tests lower it to reach the path). */
    private readonly renumberAt: number = RENUMBER_AT,
  ) {
    this.scale = windowS > 0 ? windowS : 1;
    // A power of two (ring indices are masked), no larger than maxSamples needs.
    let cap = MIN_CAPACITY;
    while (cap < Math.min(INITIAL_CAPACITY, maxSamples)) cap *= 2;
    this.cap = cap;
    this.buf = new Float64Array(cap * STRIDE);
    this.minQ = new Int32Array(cap);
    this.maxQ = new Int32Array(cap);
  }

  /** Samples in the current bias-on stretch. */
  get count(): number {
    return this.end - this.start;
  }

  /** Stress seconds from the oldest sample of the stretch to the latest; 0 when empty. */
  get spanS(): number {
    return this.count > 0 ? this.timeAt(this.end - 1) - this.timeAt(this.start) : 0;
  }

  private timeAt(k: number): number {
    return this.buf[(k & (this.cap - 1)) * STRIDE + F_T];
  }

  private caseAt(k: number): number {
    return this.buf[(k & (this.cap - 1)) * STRIDE + F_CASE];
  }

  /** Forget everything (a gap in telemetry, a trip, a reboot of the rig's clock). */
  reset(): void {
    this.clearWindow();
    this.hasLast = false;
    this.lastTS = NaN;
    this.lastBiasOn = false;
    this.lastChamberC = NaN;
    this.lastTjC = 0;
  }

  private clearWindow(): void {
    this.start = this.end = 0;
    this.minHead = this.minTail = this.maxHead = this.maxTail = 0;
    this.zeroSums();
    this.opsSinceRebuild = 0;
  }

  /**
   * Add the latest sample. A bias-off sample ends the stretch; a sample not later than the previous
   * one starts afresh (new time base). θjc is the loaded device's; when it changes (the socket map
   * changed) the window's junction estimates are recomputed.
   */
  push(s: TrendSample, thetaJcCPerW: number): void {
    if (this.hasLast && !(s.tS > this.lastTS)) this.clearWindow();
    this.hasLast = true;
    this.lastTS = s.tS;
    this.lastBiasOn = s.biasOn;
    this.lastChamberC = s.chamberC;
    const caseC = s.caseC;
    const p = s.vV * s.iA;
    if (!s.biasOn) {
      this.lastTjC = caseC;
      this.clearWindow();
      return;
    }
    if (thetaJcCPerW !== this.thetaJc) {
      this.thetaJc = thetaJcCPerW;
      if (this.count > 0) this.rebuild();
    }
    this.lastTjC = caseC + thetaJcCPerW * p;
    if (this.count === this.cap) this.grow();
    if (this.end >= this.renumberAt) this.renumber();
    const mask = this.cap - 1;
    const buf = this.buf;
    const k = this.end++;
    const o = (k & mask) * STRIDE;
    buf[o + F_T] = s.tS;
    buf[o + F_CASE] = caseC;
    buf[o + F_POWER] = p;
    buf[o + F_RISE] = caseC - s.chamberC;
    if (this.count === 1) this.rebuild();
    else this.addSums(o, 1);
    // Case extremes.
    const minQ = this.minQ;
    while (this.minTail > this.minHead && this.caseAt(minQ[(this.minTail - 1) & mask]) >= caseC) this.minTail--;
    minQ[this.minTail++ & mask] = k;
    const maxQ = this.maxQ;
    while (this.maxTail > this.maxHead && this.caseAt(maxQ[(this.maxTail - 1) & mask]) <= caseC) this.maxTail--;
    maxQ[this.maxTail++ & mask] = k;
    // Leave the window: older than windowS, or beyond maxSamples.
    const oldest = s.tS - this.windowS;
    while (this.count > 1 && (buf[(this.start & mask) * STRIDE + F_T] < oldest || this.count > this.maxSamples)) {
      this.addSums((this.start & mask) * STRIDE, -1);
      this.start++;
    }
    while (minQ[this.minHead & mask] < this.start) this.minHead++;
    while (maxQ[this.maxHead & mask] < this.start) this.maxHead++;
    if (buf[(this.start & mask) * STRIDE + F_T] - this.t0 > this.scale || this.opsSinceRebuild > 4 * this.count + 64) this.rebuild();
  }

  private grow(): void {
    const cap = this.cap * 2;
    const oldMask = this.cap - 1;
    const mask = cap - 1;
    const b = new Float64Array(cap * STRIDE);
    for (let k = this.start; k < this.end; k++) {
      const from = (k & oldMask) * STRIDE;
      const to = (k & mask) * STRIDE;
      for (let f = 0; f < STRIDE; f++) b[to + f] = this.buf[from + f];
    }
    const moveQ = (q: Int32Array, head: number, tail: number) => {
      const r = new Int32Array(cap);
      for (let n = head; n < tail; n++) r[n & mask] = q[n & oldMask];
      return r;
    };
    this.minQ = moveQ(this.minQ, this.minHead, this.minTail);
    this.maxQ = moveQ(this.maxQ, this.maxHead, this.maxTail);
    this.buf = b;
    this.cap = cap;
  }

  /**
   * Keep absolute indices within Int32 (the deques store them): subtract a multiple of the
   * capacity from every index, which leaves every ring position where it is. Once per 2³⁰ samples.
   */
  private renumber(): void {
    const mask = this.cap - 1;
    const base = this.start - (this.start & mask);
    for (let n = this.minHead; n < this.minTail; n++) this.minQ[n & mask] -= base;
    for (let n = this.maxHead; n < this.maxTail; n++) this.maxQ[n & mask] -= base;
    this.minTail -= this.minHead - (this.minHead & mask);
    this.minHead &= mask;
    this.maxTail -= this.maxHead - (this.maxHead & mask);
    this.maxHead &= mask;
    this.start -= base;
    this.end -= base;
  }

  private zeroSums(): void {
    this.s1 = this.s2 = this.s3 = this.s4 = 0;
    this.q0 = this.q1 = this.q2 = this.yy = 0;
    this.sc = this.scc = this.sp = this.spp = this.scp = 0;
    this.rawP2 = this.rawRiseP = 0;
  }

  /** Re-anchor at the oldest sample and recompute every sum from the buffer. */
  private rebuild(): void {
    this.zeroSums();
    this.opsSinceRebuild = 0;
    if (this.count === 0) return;
    const mask = this.cap - 1;
    const o0 = (this.start & mask) * STRIDE;
    this.t0 = this.buf[o0 + F_T];
    this.c0 = this.buf[o0 + F_CASE];
    this.p0 = this.buf[o0 + F_POWER];
    this.y0 = this.c0 + this.thetaJc * this.p0;
    for (let k = this.start; k < this.end; k++) this.addSums((k & mask) * STRIDE, 1);
    this.opsSinceRebuild = 0;
  }

  /** Add (sign 1) or remove (−1) the sample at buffer offset `o` to or from the sums. */
  private addSums(o: number, sign: 1 | -1): void {
    const buf = this.buf;
    const caseC = buf[o + F_CASE];
    const P = buf[o + F_POWER];
    const u = (buf[o + F_T] - this.t0) / this.scale;
    const y = caseC + this.thetaJc * P - this.y0;
    const u2 = u * u;
    this.s1 += sign * u;
    this.s2 += sign * u2;
    this.s3 += sign * u2 * u;
    this.s4 += sign * u2 * u2;
    this.q0 += sign * y;
    this.q1 += sign * u * y;
    this.q2 += sign * u2 * y;
    this.yy += sign * y * y;
    const c = caseC - this.c0;
    const p = P - this.p0;
    this.sc += sign * c;
    this.scc += sign * c * c;
    this.sp += sign * p;
    this.spp += sign * p * p;
    this.scp += sign * c * p;
    this.rawP2 += sign * P * P;
    this.rawRiseP += sign * buf[o + F_RISE] * P;
    this.opsSinceRebuild++;
  }

  /**
   * Least-squares Tj = a0 + a1·u + a2·u² over the window; slope, curvature and the fitted value at
   * the latest sample with standard errors from σ̂²(XᵀX)⁻¹. Null below 4 samples or when singular.
   */
  quadraticFit(): QuadFit | null {
    const o = new Float64Array(FIT_LEN);
    if (!this.quadraticFitTo(o)) return null;
    return { c0: o[FIT_C0], slope: o[FIT_SLOPE], slopeSe: o[FIT_SLOPE_SE], accel: o[FIT_ACCEL], accelSe: o[FIT_ACCEL_SE] };
  }

  /**
   * quadraticFit into `out` (FIT_* slots), allocating nothing: live protection calls it for every
   * socket-sample, and the result objects (a box per number) were most of its garbage. False when
   * there is no fit.
   */
  quadraticFitTo(out: Float64Array): boolean {
    const n = this.count;
    if (n < 4) return false;
    const s0 = n;
    const { s1, s2, s3, s4 } = this;
    // Symmetric M = [[s0,s1,s2],[s1,s2,s3],[s2,s3,s4]]; inverse by cofactors.
    const a = s2 * s4 - s3 * s3;
    const b = -(s1 * s4 - s2 * s3);
    const c = s1 * s3 - s2 * s2;
    const det = s0 * a + s1 * b + s2 * c;
    if (!(Math.abs(det) > 0)) return false;
    const i00 = a / det;
    const i01 = b / det;
    const i02 = c / det;
    const i11 = (s0 * s4 - s2 * s2) / det;
    const i12 = -(s0 * s3 - s1 * s2) / det;
    const i22 = (s0 * s2 - s1 * s1) / det;
    const { q0, q1, q2 } = this;
    const a0 = i00 * q0 + i01 * q1 + i02 * q2;
    const a1 = i01 * q0 + i11 * q1 + i12 * q2;
    const a2 = i02 * q0 + i12 * q1 + i22 * q2;
    const rss = Math.max(0, this.yy - (a0 * q0 + a1 * q1 + a2 * q2));
    const sigma2 = rss / (n - 3);
    const ul = (this.timeAt(this.end - 1) - this.t0) / this.scale;
    const w = this.scale;
    // slope = (a1 + 2·a2·ul)/w: variance gᵀ(XᵀX)⁻¹g·σ̂²/w² with g = (0, 1, 2·ul).
    const gVar = i11 + 4 * ul * i12 + 4 * ul * ul * i22;
    out[FIT_C0] = this.y0 + a0 + a1 * ul + a2 * ul * ul;
    out[FIT_SLOPE] = (a1 + 2 * a2 * ul) / w;
    out[FIT_SLOPE_SE] = Math.sqrt(Math.max(0, sigma2 * gVar)) / w;
    out[FIT_ACCEL] = (2 * a2) / (w * w);
    out[FIT_ACCEL_SE] = (2 * Math.sqrt(Math.max(0, sigma2 * i22))) / (w * w);
    return true;
  }

  /** The sums behind the loop-gain estimate. */
  caseRegression(): CaseRegression {
    const o = new Float64Array(REG_LEN);
    this.caseRegressionTo(o);
    return { n: o[REG_N], sumP2: o[REG_SUM_P2], sumRiseP: o[REG_SUM_RISE_P], caseSpanC: o[REG_CASE_SPAN], slope: o[REG_SLOPE], rss: o[REG_RSS], sxx: o[REG_SXX] };
  }

  /** caseRegression into `out` (REG_* slots), allocating nothing. */
  caseRegressionTo(out: Float64Array): void {
    const n = this.count;
    const mask = this.cap - 1;
    const span = n > 0 ? this.caseAt(this.maxQ[this.maxHead & mask]) - this.caseAt(this.minQ[this.minHead & mask]) : 0;
    const sxx = n > 0 ? Math.max(0, this.scc - (this.sc * this.sc) / n) : 0;
    const sxy = n > 0 ? this.scp - (this.sc * this.sp) / n : 0;
    const syy = n > 0 ? Math.max(0, this.spp - (this.sp * this.sp) / n) : 0;
    const slope = sxx > 0 ? sxy / sxx : NaN;
    out[REG_N] = n;
    out[REG_SUM_P2] = this.rawP2;
    out[REG_SUM_RISE_P] = this.rawRiseP;
    out[REG_CASE_SPAN] = span;
    out[REG_SLOPE] = slope;
    out[REG_RSS] = sxx > 0 ? Math.max(0, syy - slope * sxy) : NaN;
    out[REG_SXX] = sxx;
  }
}

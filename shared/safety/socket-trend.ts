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

/** Fields of one sample in SocketTrend's ring (interleaved: one sample = STRIDE numbers). */
const F_T = 0;
const F_CASE = 1;
const F_POWER = 2;
/** T_case − T_chamber. */
const F_RISE = 3;
const STRIDE = 4;
/** Absolute sample indices are renumbered (by a multiple of the capacity) before they reach this. */
const RENUMBER_AT = 0x40000000;

/**
 * Slots of the state at the head of SocketTrend's one Float64Array. The sums are taken about an
 * anchor (time, Tj, case and power of the oldest sample when last rebuilt): Σ u^k (k = 1…4),
 * Σ u^k·y (k = 0…2), Σ y² with u = (t − t0)/scale, y = Tj − y0; Σ c, Σ c², Σ p, Σ p², Σ c·p with
 * c = case − c0, p = P − p0 (the line of P on the case); raw Σ P², Σ (case − chamber)·P (θca).
 */
const S_T0 = 0;
const S_Y0 = 1;
const S_C0 = 2;
const S_P0 = 3;
const S_S1 = 4;
const S_S2 = 5;
const S_S3 = 6;
const S_S4 = 7;
const S_Q0 = 8;
const S_Q1 = 9;
const S_Q2 = 10;
const S_YY = 11;
const S_SC = 12;
const S_SCC = 13;
const S_SP = 14;
const S_SPP = 15;
const S_SCP = 16;
const S_RAW_P2 = 17;
const S_RAW_RISE_P = 18;
/** The latest sample's time, chamber and junction estimate; θjc of the window's estimates. */
const S_LAST_T = 19;
const S_LAST_CHAMBER = 20;
const S_LAST_TJ = 21;
const S_THETA_JC = 22;
/** Where the ring starts. */
const HEAD = 24;

export class SocketTrend {
  /**
   * Everything with a fractional value lives in one Float64Array: the state (S_* slots), then the
   * ring of the window (continuous bias-on stretch within windowS, absolute indices [start, end),
   * STRIDE numbers per sample), then the two monotonic deques (absolute indices of the case
   * minimum and maximum, `cap` slots each, entries [head, tail)). Live protection pushes one
   * sample into each of thousands of sockets in turn, so every push reaches memory that has left
   * the cache since: one array costs a few adjacent cache lines per push, where number fields (one
   * heap box each in V8) and separate arrays cost a line apiece (measured: bench/README.md).
   */
  private cap: number;
  private b: Float64Array;
  /** Offsets of the deques in `b` (they move when the ring grows). */
  private minAt: number;
  private maxAt: number;
  private start = 0;
  private end = 0;
  private minHead = 0;
  private minTail = 0;
  private maxHead = 0;
  private maxTail = 0;
  private opsSinceRebuild = 0;
  /** Time scale of the sums (the window length). */
  private readonly scale: number;

  /** Whether a sample was pushed (bias on or off) since the last reset, and its bias. */
  hasLast = false;
  lastBiasOn = false;

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
    this.b = new Float64Array(HEAD + cap * (STRIDE + 2));
    this.minAt = HEAD + cap * STRIDE;
    this.maxAt = this.minAt + cap;
    this.b[S_LAST_T] = NaN;
    this.b[S_LAST_CHAMBER] = NaN;
    this.b[S_THETA_JC] = NaN;
  }

  /** The latest sample's stress-clock time (NaN with none). */
  get lastTS(): number {
    return this.b[S_LAST_T];
  }

  /** The latest sample's chamber temperature (NaN with none). */
  get lastChamberC(): number {
    return this.b[S_LAST_CHAMBER];
  }

  /** The latest sample's junction estimate: T_case + θjc·P with bias on, else T_case. */
  get lastTjC(): number {
    return this.b[S_LAST_TJ];
  }

  /** Samples in the current bias-on stretch. */
  get count(): number {
    return this.end - this.start;
  }

  /** Stress seconds from the oldest sample of the stretch to the latest; 0 when empty. */
  get spanS(): number {
    return this.count > 0 ? this.timeAt(this.end - 1) - this.timeAt(this.start) : 0;
  }

  /**
   * The junction estimate of the k-th newest sample of the stretch (0 = latest), and its time; NaN
   * when the stretch holds fewer. Protection's early rule reads the first and the previous sample.
   */
  tjBack(k: number): number {
    if (k < 0 || k >= this.count) return NaN;
    const at = HEAD + ((this.end - 1 - k) & (this.cap - 1)) * STRIDE;
    return this.b[at + F_CASE] + this.b[S_THETA_JC] * this.b[at + F_POWER];
  }

  timeBack(k: number): number {
    return k < 0 || k >= this.count ? NaN : this.timeAt(this.end - 1 - k);
  }

  private timeAt(k: number): number {
    return this.b[HEAD + (k & (this.cap - 1)) * STRIDE + F_T];
  }

  private caseAt(k: number): number {
    return this.b[HEAD + (k & (this.cap - 1)) * STRIDE + F_CASE];
  }

  /** Forget everything (a gap in telemetry, a trip, a reboot of the rig's clock). */
  reset(): void {
    this.clearWindow();
    this.hasLast = false;
    this.lastBiasOn = false;
    this.b[S_LAST_T] = NaN;
    this.b[S_LAST_CHAMBER] = NaN;
    this.b[S_LAST_TJ] = 0;
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
    const b = this.b;
    if (this.hasLast && !(s.tS > b[S_LAST_T])) this.clearWindow();
    this.hasLast = true;
    b[S_LAST_T] = s.tS;
    this.lastBiasOn = s.biasOn;
    b[S_LAST_CHAMBER] = s.chamberC;
    const caseC = s.caseC;
    const p = s.vV * s.iA;
    if (!s.biasOn) {
      b[S_LAST_TJ] = caseC;
      this.clearWindow();
      return;
    }
    if (thetaJcCPerW !== b[S_THETA_JC]) {
      b[S_THETA_JC] = thetaJcCPerW;
      if (this.count > 0) this.rebuild();
    }
    b[S_LAST_TJ] = caseC + thetaJcCPerW * p;
    if (this.count === this.cap) this.grow();
    if (this.end >= this.renumberAt) this.renumber();
    const buf = this.b;
    const mask = this.cap - 1;
    const k = this.end++;
    const o = HEAD + (k & mask) * STRIDE;
    buf[o + F_T] = s.tS;
    buf[o + F_CASE] = caseC;
    buf[o + F_POWER] = p;
    buf[o + F_RISE] = caseC - s.chamberC;
    if (this.count === 1) this.rebuild();
    else this.addSums(o, 1);
    // Case extremes.
    const minAt = this.minAt;
    while (this.minTail > this.minHead && this.caseAt(buf[minAt + ((this.minTail - 1) & mask)]) >= caseC) this.minTail--;
    buf[minAt + (this.minTail++ & mask)] = k;
    const maxAt = this.maxAt;
    while (this.maxTail > this.maxHead && this.caseAt(buf[maxAt + ((this.maxTail - 1) & mask)]) <= caseC) this.maxTail--;
    buf[maxAt + (this.maxTail++ & mask)] = k;
    // Leave the window: older than windowS, or beyond maxSamples.
    const oldest = s.tS - this.windowS;
    while (this.count > 1 && (buf[HEAD + (this.start & mask) * STRIDE + F_T] < oldest || this.count > this.maxSamples)) {
      this.addSums(HEAD + (this.start & mask) * STRIDE, -1);
      this.start++;
    }
    while (buf[minAt + (this.minHead & mask)] < this.start) this.minHead++;
    while (buf[maxAt + (this.maxHead & mask)] < this.start) this.maxHead++;
    if (buf[HEAD + (this.start & mask) * STRIDE + F_T] - buf[S_T0] > this.scale || this.opsSinceRebuild > 4 * this.count + 64)
      this.rebuild();
  }

  /**
   * Read (and so bring into the cache) the memory the next push will use: the state, the ring
   * slots at both ends of the window and the ends of both deques. Live protection calls this for
   * every socket of a message before pushing any: these loads do not depend on each other, so the
   * processor overlaps their cache misses, where one push after another waited on each in turn.
   * Returns a meaningless number (keep it, so the loads are not optimised away).
   */
  touch(): number {
    const b = this.b;
    const mask = this.cap - 1;
    return (
      b[S_LAST_T] +
      b[S_Q2] +
      b[S_THETA_JC] +
      b[HEAD + (this.end & mask) * STRIDE] +
      b[HEAD + (this.start & mask) * STRIDE] +
      b[this.minAt + ((this.minTail - 1) & mask)] +
      b[this.maxAt + ((this.maxTail - 1) & mask)] +
      b[this.minAt + (this.minHead & mask)] +
      b[this.maxAt + (this.maxHead & mask)]
    );
  }

  private grow(): void {
    const cap = this.cap * 2;
    const oldMask = this.cap - 1;
    const mask = cap - 1;
    const from = this.b;
    const b = new Float64Array(HEAD + cap * (STRIDE + 2));
    for (let f = 0; f < HEAD; f++) b[f] = from[f];
    for (let k = this.start; k < this.end; k++) {
      const src = HEAD + (k & oldMask) * STRIDE;
      const dst = HEAD + (k & mask) * STRIDE;
      for (let f = 0; f < STRIDE; f++) b[dst + f] = from[src + f];
    }
    const minAt = HEAD + cap * STRIDE;
    const maxAt = minAt + cap;
    for (let n = this.minHead; n < this.minTail; n++) b[minAt + (n & mask)] = from[this.minAt + (n & oldMask)];
    for (let n = this.maxHead; n < this.maxTail; n++) b[maxAt + (n & mask)] = from[this.maxAt + (n & oldMask)];
    this.b = b;
    this.cap = cap;
    this.minAt = minAt;
    this.maxAt = maxAt;
  }

  /**
   * Keep absolute indices small (they are masked as 32-bit integers): subtract a multiple of the
   * capacity from every index, which leaves every ring position where it is. Once per 2³⁰ samples.
   */
  private renumber(): void {
    const b = this.b;
    const mask = this.cap - 1;
    const base = this.start - (this.start & mask);
    for (let n = this.minHead; n < this.minTail; n++) b[this.minAt + (n & mask)] -= base;
    for (let n = this.maxHead; n < this.maxTail; n++) b[this.maxAt + (n & mask)] -= base;
    this.minTail -= this.minHead - (this.minHead & mask);
    this.minHead &= mask;
    this.maxTail -= this.maxHead - (this.maxHead & mask);
    this.maxHead &= mask;
    this.start -= base;
    this.end -= base;
  }

  private zeroSums(): void {
    this.b.fill(0, S_S1, S_RAW_RISE_P + 1);
  }

  /** Re-anchor at the oldest sample and recompute every sum from the ring. */
  private rebuild(): void {
    this.zeroSums();
    this.opsSinceRebuild = 0;
    if (this.count === 0) return;
    const b = this.b;
    const mask = this.cap - 1;
    const o0 = HEAD + (this.start & mask) * STRIDE;
    b[S_T0] = b[o0 + F_T];
    b[S_C0] = b[o0 + F_CASE];
    b[S_P0] = b[o0 + F_POWER];
    b[S_Y0] = b[S_C0] + b[S_THETA_JC] * b[S_P0];
    for (let k = this.start; k < this.end; k++) this.addSums(HEAD + (k & mask) * STRIDE, 1);
    this.opsSinceRebuild = 0;
  }

  /** Add (sign 1) or remove (−1) the sample at offset `o` of the array to or from the sums. */
  private addSums(o: number, sign: 1 | -1): void {
    const b = this.b;
    const caseC = b[o + F_CASE];
    const P = b[o + F_POWER];
    const u = (b[o + F_T] - b[S_T0]) / this.scale;
    const y = caseC + b[S_THETA_JC] * P - b[S_Y0];
    const u2 = u * u;
    b[S_S1] += sign * u;
    b[S_S2] += sign * u2;
    b[S_S3] += sign * u2 * u;
    b[S_S4] += sign * u2 * u2;
    b[S_Q0] += sign * y;
    b[S_Q1] += sign * u * y;
    b[S_Q2] += sign * u2 * y;
    b[S_YY] += sign * y * y;
    const c = caseC - b[S_C0];
    const p = P - b[S_P0];
    b[S_SC] += sign * c;
    b[S_SCC] += sign * c * c;
    b[S_SP] += sign * p;
    b[S_SPP] += sign * p * p;
    b[S_SCP] += sign * c * p;
    b[S_RAW_P2] += sign * P * P;
    b[S_RAW_RISE_P] += sign * b[o + F_RISE] * P;
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
    const st = this.b;
    const s1 = st[S_S1];
    const s2 = st[S_S2];
    const s3 = st[S_S3];
    const s4 = st[S_S4];
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
    const q0 = st[S_Q0];
    const q1 = st[S_Q1];
    const q2 = st[S_Q2];
    const a0 = i00 * q0 + i01 * q1 + i02 * q2;
    const a1 = i01 * q0 + i11 * q1 + i12 * q2;
    const a2 = i02 * q0 + i12 * q1 + i22 * q2;
    const rss = Math.max(0, st[S_YY] - (a0 * q0 + a1 * q1 + a2 * q2));
    const sigma2 = rss / (n - 3);
    const ul = (this.timeAt(this.end - 1) - st[S_T0]) / this.scale;
    const w = this.scale;
    // slope = (a1 + 2·a2·ul)/w: variance gᵀ(XᵀX)⁻¹g·σ̂²/w² with g = (0, 1, 2·ul).
    const gVar = i11 + 4 * ul * i12 + 4 * ul * ul * i22;
    out[FIT_C0] = st[S_Y0] + a0 + a1 * ul + a2 * ul * ul;
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
    return {
      n: o[REG_N],
      sumP2: o[REG_SUM_P2],
      sumRiseP: o[REG_SUM_RISE_P],
      caseSpanC: o[REG_CASE_SPAN],
      slope: o[REG_SLOPE],
      rss: o[REG_RSS],
      sxx: o[REG_SXX],
    };
  }

  /** caseRegression into `out` (REG_* slots), allocating nothing. */
  caseRegressionTo(out: Float64Array): void {
    const n = this.count;
    const b = this.b;
    const mask = this.cap - 1;
    const span = n > 0 ? this.caseAt(b[this.maxAt + (this.maxHead & mask)]) - this.caseAt(b[this.minAt + (this.minHead & mask)]) : 0;
    const sc = b[S_SC];
    const sp = b[S_SP];
    const sxx = n > 0 ? Math.max(0, b[S_SCC] - (sc * sc) / n) : 0;
    const sxy = n > 0 ? b[S_SCP] - (sc * sp) / n : 0;
    const syy = n > 0 ? Math.max(0, b[S_SPP] - (sp * sp) / n) : 0;
    const slope = sxx > 0 ? sxy / sxx : NaN;
    out[REG_N] = n;
    out[REG_SUM_P2] = b[S_RAW_P2];
    out[REG_SUM_RISE_P] = b[S_RAW_RISE_P];
    out[REG_CASE_SPAN] = span;
    out[REG_SLOPE] = slope;
    out[REG_RSS] = sxx > 0 ? Math.max(0, syy - slope * sxy) : NaN;
    out[REG_SXX] = sxx;
  }
}

/**
 * Temperature cycling in a chamber (tc, JESD22-A104): the air's profile and the cycle count from the
 * load's temperature. Pure; the rig simulator drives its chamber with `profileSetpointC`, the
 * server counts cycles with `TcCycleCounter` from the load temperature the chamber reports.
 *
 * Why not shared/scheduling/cycling.ts: power cycling counts cycles the rig itself reports per socket
 * (with the junction swing it measured); a chamber reports temperatures, and a cycle is counted here
 * only when the load (a thermocouple on a dummy part among the devices) has reached each extreme
 * and dwelt there — the method's condition on the sample, not on the air [memory: JESD22-A104 —
 * the sample's temperature, not the air's, must reach Ts(min)/Ts(max) for the soak time].
 */
import { TC_COLD_BAND_K } from '../domain/chamber-methods';
import { METHOD_CHAMBER_BAND_K, type ChamberBandK } from '../domain/standards';

export interface TcProfile {
  lowC: number;
  highC: number;
  dwellMin: number;
  rampKPerMin: number;
  cycles: number;
}

/** Minutes of one cycle of the air's programme: a ramp each way and a dwell at each extreme. */
export function tcPeriodMin(p: Pick<TcProfile, 'lowC' | 'highC' | 'dwellMin' | 'rampKPerMin'>): number {
  return 2 * p.dwellMin + (2 * (p.highC - p.lowC)) / p.rampKPerMin;
}
/** Hours of one cycle (a plan's durationH is cycles × this; its read points map onto cycles in proportion). */
export const tcPeriodH = (p: Pick<TcProfile, 'lowC' | 'highC' | 'dwellMin' | 'rampKPerMin'>): number => tcPeriodMin(p) / 60;
/** A read point in cycles as the plan's hours (the convention of cycling plans: durationH ↔ cycles in proportion). */
export const tcCyclesToH = (p: TcProfile, cycles: number): number => cycles * tcPeriodH(p);
/** A read point in the plan's hours as cycles (rounded to a whole cycle). */
export const tcHToCycles = (p: TcProfile, h: number): number => Math.round(h / tcPeriodH(p));

/**
 * The air set point `tMin` minutes into the programme (starting at the start of the hot ramp from
 * the cold extreme): ramp up, dwell hot, ramp down, dwell cold. The air is aimed at the middle of
 * each extreme's band (above the hot extreme, below the cold one) so the lagging load reaches it.
 */
export function profileSetpointC(p: TcProfile, tMin: number, hotBand: ChamberBandK = METHOD_CHAMBER_BAND_K.tc): number {
  const hot = p.highC + (hotBand.aboveK - hotBand.belowK) / 2;
  const cold = p.lowC - (TC_COLD_BAND_K.belowK - TC_COLD_BAND_K.aboveK) / 2;
  const rampMin = (hot - cold) / p.rampKPerMin;
  const period = 2 * rampMin + 2 * p.dwellMin;
  const t = ((tMin % period) + period) % period;
  if (t < rampMin) return cold + p.rampKPerMin * t;
  if (t < rampMin + p.dwellMin) return hot;
  if (t < 2 * rampMin + p.dwellMin) return hot - p.rampKPerMin * (t - rampMin - p.dwellMin);
  return cold;
}

/** Where the counter is within a cycle. */
export type TcPhase = 'to-hot' | 'hot' | 'to-cold' | 'cold';

export interface TcCounterState {
  phase: TcPhase;
  /** Minutes the load has dwelt inside the current extreme's band. */
  dwellMin: number;
  /** Cycles completed with both extremes reached and dwelt. */
  cycles: number;
  /** Lowest and highest load temperature of the cycle under way (its swing once complete). */
  minC: number;
  maxC: number;
  /** Smallest load swing (K) over the counted cycles; null before the first. */
  minSwingK: number | null;
  /** Samples outside the allowed range (beyond an extreme's band): excursions, each an alarm. */
  excursions: number;
  /** The last sample (minutes, °C) — dwell is accrued between consecutive samples inside the band. */
  lastMin: number | null;
  lastC: number | null;
}

export const newTcCounter = (): TcCounterState => ({
  phase: 'to-hot',
  dwellMin: 0,
  cycles: 0,
  minC: Infinity,
  maxC: -Infinity,
  minSwingK: null,
  excursions: 0,
  lastMin: null,
  lastC: null,
});

/** The bands the load must be in at each extreme (°C). */
export function tcBands(p: Pick<TcProfile, 'lowC' | 'highC'>, hotBand: ChamberBandK = METHOD_CHAMBER_BAND_K.tc) {
  return {
    hot: { lowC: p.highC - hotBand.belowK, highC: p.highC + hotBand.aboveK },
    cold: { lowC: p.lowC - TC_COLD_BAND_K.belowK, highC: p.lowC + TC_COLD_BAND_K.aboveK },
  };
}

export interface TcStep {
  state: TcCounterState;
  /** Cycles completed by this sample (0 or 1; a sample rate slower than a cycle is refused upstream). */
  completed: number;
  /** The sample lay beyond an extreme's band (over- or under-shoot). */
  excursion: boolean;
}

/**
 * One load sample (minutes on the run's clock, °C). A cycle is: reach the hot band and stay in it
 * for the dwell, then reach the cold band and stay for the dwell; it completes at the end of the
 * cold dwell. Dwell counts only between two consecutive samples both inside the band (a sample
 * outside restarts nothing but adds no dwell). A sample beyond a band is an excursion: counted,
 * and the cycle under way still needs its dwell (an overshoot is not a dwell).
 */
export function stepTcCounter(p: TcProfile, s: TcCounterState, tMin: number, loadC: number, hotBand?: ChamberBandK): TcStep {
  const b = tcBands(p, hotBand);
  const st: TcCounterState = { ...s };
  let completed = 0;
  const excursion = loadC > b.hot.highC || loadC < b.cold.lowC;
  if (excursion) st.excursions++;
  st.minC = Math.min(st.minC, loadC);
  st.maxC = Math.max(st.maxC, loadC);
  const inHot = (c: number) => c >= b.hot.lowC && c <= b.hot.highC;
  const inCold = (c: number) => c >= b.cold.lowC && c <= b.cold.highC;
  const dt = st.lastMin === null ? 0 : Math.max(0, tMin - st.lastMin);
  const prev = st.lastC;
  if ((st.phase === 'to-hot' || st.phase === 'hot') && inHot(loadC)) {
    if (st.phase === 'hot' && prev !== null && inHot(prev)) st.dwellMin += dt;
    st.phase = 'hot';
    if (st.dwellMin >= p.dwellMin - 1e-9) {
      st.phase = 'to-cold';
      st.dwellMin = 0;
    }
  } else if ((st.phase === 'to-cold' || st.phase === 'cold') && inCold(loadC)) {
    if (st.phase === 'cold' && prev !== null && inCold(prev)) st.dwellMin += dt;
    st.phase = 'cold';
    if (st.dwellMin >= p.dwellMin - 1e-9) {
      completed = 1;
      st.cycles++;
      const swing = st.maxC - st.minC;
      st.minSwingK = st.minSwingK === null ? swing : Math.min(st.minSwingK, swing);
      st.phase = 'to-hot';
      st.dwellMin = 0;
      st.minC = loadC;
      st.maxC = loadC;
    }
  } else if (st.phase === 'hot' || st.phase === 'cold') {
    // Left the band before the dwell was done: the dwell starts again on the next entry.
    st.dwellMin = 0;
  }
  st.lastMin = tMin;
  st.lastC = loadC;
  return { state: st, completed, excursion };
}

/** Counts a whole series of (minutes, load °C) samples from a fresh counter. */
export function countTcCycles(p: TcProfile, samples: ReadonlyArray<readonly [number, number]>, hotBand?: ChamberBandK): TcCounterState {
  let s = newTcCounter();
  for (const [t, c] of samples) s = stepTcCounter(p, s, t, c, hotBand).state;
  return s;
}

/**
 * The lot verdict's rules, declared once (shared/verdict/judge.ts applies them). A module of its
 * own with no imports of the statistics libraries: screens that show these numbers import it
 * without loading jstat and simple-statistics.
 */
import type { LotVerdict } from '../schemas/analytics';

/** Confidence at which an LTPD is demonstrated (MIL-PRF-19500 LTPD tables: 90 %). */
export const LTPD_CONFIDENCE = 0.9;
/**
 * Peer lots needed before control limits come from an individuals chart; below it a prediction
 * interval (common practice: Montgomery advises 20–25 subgroups for trial control limits).
 */
export const PEER_CHART_MIN_LOTS = 20;
/** Peer lots needed for a prediction interval (a sample standard deviation needs two). */
export const PEER_INTERVAL_MIN_LOTS = 2;
/** Two-sided confidence of the prediction interval: the false-alarm rate of ±3σ limits (common practice). */
export const PEER_INTERVAL_CONFIDENCE = 0.9973;
/**
 * A device path is extrapolated to at most this multiple of the last read point it was measured
 * at; a path that does not reach its limit by then is a suspension there (common practice: keep
 * degradation extrapolation within a small multiple of the observed time, NIST e-Handbook §8.4.2.3 cautions).
 */
export const EXTRAPOLATION_LIMIT = 5;

/** Order in which a plan's verdict outranks another when combining (worst first). */
export const VERDICT_RANK: Record<LotVerdict, number> = {
  failed: 0,
  drifting: 1,
  'insufficient-sample': 2,
  incomplete: 3,
  'in-progress': 4,
  passed: 5,
  untested: 6,
};

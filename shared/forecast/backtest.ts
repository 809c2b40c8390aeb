/**
 * The forecast's back-test: finished lots cut at each read point, forecast, and compared with how
 * they ended — a calibration table (predicted chance of passing in bins vs the observed pass rate)
 * and the lead time (read points before the final one from which the forecast stayed on the right
 * side of 0.5, and certain enough).
 *
 * "Passed" here is the forecast's own question: failures at the end within the accept number. The
 * final verdict can still differ (a short sample, a missing reading, drift against peer lots):
 * those lots are counted in `otherVerdicts`.
 */
import type { LotEvidence, PeerLot } from '../verdict/evidence';
import { judgeLot } from '../verdict/judge';
import { planForecastHistory } from './history';
import { BACKTEST_BINS, certainty } from './rules';

export interface BacktestLotResult {
  lotCode: string;
  planName: string;
  /** Failures at the end within the accept number. */
  passed: boolean;
  finalVerdict: string;
  /** Plan read points after time zero, ascending (the last is the end). */
  readPointsH: number[];
  points: Array<{ hours: number; pPass: number | null; verdict: string }>;
  /** Read points before the end from which P(pass) stayed on the right side of 0.5 (0 = only at the end). */
  leadRightSide: number;
  /** The same for certain enough (FORECAST_CERTAINTY) and right; null when it never was before the end. */
  leadCertain: number | null;
  /** Read points before the end at which the verdict (cut there) first showed 'failed'; null for a lot that passed. */
  verdictLead: number | null;
}

export interface CalibrationBin {
  from: number;
  to: number;
  forecasts: number;
  meanPredicted: number | null;
  observedPassRate: number | null;
}

export interface BacktestResult {
  lots: BacktestLotResult[];
  bins: CalibrationBin[];
  /** Forecasts that could be made (cut before the end, a number given). */
  forecasts: number;
  /** Mean over lots of leadRightSide and of leadCertain (never certain counts as 0). */
  meanLeadRightSide: number | null;
  meanLeadCertain: number | null;
  /** Lots whose forecast turned (crossed 0.5 the right way) before their verdict showed 'failed', of the failed lots. */
  failedLots: number;
  failedTurnedEarlier: number;
  /** Brier score (mean squared error of P(pass) against 1/0), common practice for probability forecasts. */
  brier: number | null;
  otherVerdicts: number;
}

/** One finished lot's plans, cut at each read point before the end. */
export function backtestLot(ev: LotEvidence, peers: PeerLot[], options?: { simulations?: number }): BacktestLotResult[] {
  const judged = judgeLot(ev, peers);
  return ev.plans.flatMap((pe, i) => {
    const pj = judged.plans[i];
    const hours = [...new Set(pe.plan.readPointsH)].filter((h) => h > 0).sort((a, b) => a - b);
    const end = hours[hours.length - 1];
    if (!hours.length || pj.latestH !== end) return [];
    const passed = pj.sample.failures <= pe.plan.acceptNumber;
    const h = planForecastHistory(ev, pe, pj, peers, options);
    const points = h.history.map((p) => ({ hours: p.hours, pPass: p.pPass, verdict: p.verdict }));
    const idx = (hh: number) => hours.indexOf(hh);
    const right = (p: number | null) => p !== null && (passed ? p >= 0.5 : p < 0.5);
    const sure = (p: number | null) => certainty(p) === (passed ? 'pass' : 'fail');
    const leadOf = (ok: (p: number | null) => boolean) => {
      let from: number | null = null;
      for (const p of points) {
        if (ok(p.pPass)) from ??= p.hours;
        else from = null;
      }
      return from === null ? null : hours.length - 1 - idx(from);
    };
    const firstFailed = points.find((p) => p.verdict === 'failed');
    return [
      {
        lotCode: ev.lot.code,
        planName: pe.plan.name,
        passed,
        finalVerdict: pj.verdict,
        readPointsH: hours,
        points,
        leadRightSide: leadOf(right) ?? 0,
        leadCertain: leadOf(sure),
        verdictLead: firstFailed ? hours.length - 1 - idx(firstFailed.hours) : null,
      },
    ];
  });
}

export function calibration(lots: BacktestLotResult[]): Pick<BacktestResult, 'bins' | 'forecasts' | 'brier'> {
  const pairs = lots.flatMap((l) =>
    l.points
      .filter((p) => p.hours < l.readPointsH[l.readPointsH.length - 1] && p.pPass !== null)
      .map((p) => ({ p: p.pPass!, y: l.passed })),
  );
  const bins: CalibrationBin[] = BACKTEST_BINS.slice(0, -1).map((from, i) => {
    const to = BACKTEST_BINS[i + 1];
    const last = i === BACKTEST_BINS.length - 2;
    const inBin = pairs.filter((x) => x.p >= from && (x.p < to || (last && x.p <= to)));
    return {
      from,
      to,
      forecasts: inBin.length,
      meanPredicted: inBin.length ? inBin.reduce((a, x) => a + x.p, 0) / inBin.length : null,
      observedPassRate: inBin.length ? inBin.filter((x) => x.y).length / inBin.length : null,
    };
  });
  const brier = pairs.length ? pairs.reduce((a, x) => a + (x.p - (x.y ? 1 : 0)) ** 2, 0) / pairs.length : null;
  return { bins, forecasts: pairs.length, brier };
}

export function backtest(lots: Array<{ evidence: LotEvidence; peers?: PeerLot[] }>, options?: { simulations?: number }): BacktestResult {
  return summarise(lots.flatMap((l) => backtestLot(l.evidence, l.peers ?? [], options)));
}

/** The calibration table and lead times over lots already back-tested. */
export function summarise(results: BacktestLotResult[]): BacktestResult {
  const cal = calibration(results);
  const failed = results.filter((r) => !r.passed);
  const turnedEarlier = failed.filter((r) => {
    const turn = r.points.find((p) => p.pPass !== null && p.pPass < 0.5);
    const verdict = r.points.find((p) => p.verdict === 'failed');
    return turn !== undefined && (verdict === undefined || turn.hours < verdict.hours);
  }).length;
  const mean = (xs: number[]) => (xs.length ? xs.reduce((a, x) => a + x, 0) / xs.length : null);
  return {
    lots: results,
    ...cal,
    meanLeadRightSide: mean(results.map((r) => r.leadRightSide)),
    meanLeadCertain: mean(results.map((r) => r.leadCertain ?? 0)),
    failedLots: failed.length,
    failedTurnedEarlier: turnedEarlier,
    otherVerdicts: results.filter((r) => r.finalVerdict !== (r.passed ? 'passed' : 'failed')).length,
  };
}

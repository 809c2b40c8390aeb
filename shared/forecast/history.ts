/**
 * A lot's forecast now and as it would have been at each earlier read point: the evidence cut at a
 * read point is judged by the same judge (shared/verdict) and forecast again. The back-test
 * (./backtest.ts) and the lot page's "certain from" both read it.
 */
import type { LotVerdict } from '../domain/verdicts';
import type { LotEvidence, PeerLot, PlanEvidence } from '../verdict/evidence';
import { judgePlan, type PlanJudgement } from '../verdict/judge';
import { forecastInput, forecastPlan, type PlanForecast } from './forecast';
import { certainty } from './rules';

/** The evidence as it stood right after read point `h`: later readings, dispositions and hours cut; runs not yet ended. */
export function evidenceAt(ev: LotEvidence, h: number): LotEvidence {
  return {
    ...ev,
    plans: ev.plans.map((pe) => planEvidenceAt(pe, h)),
  };
}

export function planEvidenceAt(pe: PlanEvidence, h: number): PlanEvidence {
  const end = Math.max(0, ...pe.plan.readPointsH);
  return {
    ...pe,
    runs: pe.runs.map((r) => ({
      ...r,
      stressHours: Math.min(r.stressHours, h),
      state: h >= end || r.stressHours <= h ? r.state : 'stressing',
    })),
    devices: pe.devices.map((d) => ({
      ...d,
      creditedHours: Math.min(d.creditedHours, h),
      readings: d.readings.filter((r) => r.readPointH <= h),
      dispositions: d.dispositions.filter((x) => x.readPointH <= h),
      trip: d.trip && d.trip.atH <= h ? d.trip : null,
    })),
  };
}

export interface ForecastPoint {
  /** The read point the evidence was cut at. */
  hours: number;
  pPass: number | null;
  state: PlanForecast['state'];
  /** The plan's verdict from the evidence cut there. */
  verdict: LotVerdict;
  failures: number;
}

export interface PlanForecastHistory {
  planId: string;
  planName: string;
  current: PlanForecast;
  /** One per read point after time zero that had judged readings, ascending. */
  history: ForecastPoint[];
  /** The first read point from which the chance of passing stayed certain enough on one side; null if never. */
  certainFrom: { hours: number; side: 'pass' | 'fail' } | null;
}

export function forecastJudged(pe: PlanEvidence, pj: PlanJudgement, options?: { simulations?: number }): PlanForecast {
  return forecastPlan(forecastInput(pe, pj), options);
}

/** The plan's forecast from the full evidence (already judged) and at each earlier read point. */
export function planForecastHistory(
  ev: LotEvidence,
  pe: PlanEvidence,
  pj: PlanJudgement,
  peers: PeerLot[],
  options?: { simulations?: number; current?: PlanForecast },
): PlanForecastHistory {
  const current = options?.current ?? forecastJudged(pe, pj, options);
  const latest = pj.latestH;
  const hours = [...new Set(pe.plan.readPointsH)].filter((h) => h > 0 && latest !== null && h <= latest).sort((a, b) => a - b);
  const history: ForecastPoint[] = hours.map((h) => {
    if (h === latest) return { hours: h, pPass: current.pPass, state: current.state, verdict: pj.verdict, failures: current.failuresNow };
    const cut = planEvidenceAt(pe, h);
    const cj = judgePlan(evidenceAt(ev, h), cut, peers);
    const f = forecastJudged(cut, cj, options);
    return { hours: h, pPass: f.pPass, state: f.state, verdict: cj.verdict, failures: f.failuresNow };
  });
  return { planId: pe.plan.planId, planName: pe.plan.name, current, history, certainFrom: certainFrom(history) };
}

/** The first point from which every later point is certain on the same side. */
export function certainFrom(history: Array<{ hours: number; pPass: number | null }>): PlanForecastHistory['certainFrom'] {
  let from: PlanForecastHistory['certainFrom'] = null;
  for (const p of history) {
    const side = certainty(p.pPass);
    if (side === null || (from && from.side !== side)) from = null;
    if (side !== null && from === null) from = { hours: p.hours, side };
  }
  return from;
}

/** Plans sampled independently: the lot passes when every plan does, so its chance is the product; null when any plan's is unknown. */
export function lotChance(plans: Array<{ pPass: number | null }>): number | null {
  if (!plans.length) return null;
  if (plans.some((p) => p.pPass === 0)) return 0;
  if (plans.some((p) => p.pPass === null)) return null;
  return plans.reduce((a, p) => a * p.pPass!, 1);
}

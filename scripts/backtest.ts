/**
 * npm run backtest [-- --lots N --simulations S --seed K]: the verdict forecast's back-test on
 * generated finished lots with known outcome (shared/forecast/generated-lots.ts, seeded), printed as
 * the calibration table and the lead times; the last line is one JSON object. The lab's own finished
 * lots are back-tested by the API (GET /api/forecast/backtest) and shown on the trends screen.
 */
import { backtest, backtestLots } from '../shared/forecast';

function arg(name: string, fallback: number): number {
  const i = process.argv.indexOf(`--${name}`);
  const v = i >= 0 ? Number(process.argv[i + 1]) : fallback;
  if (!Number.isFinite(v) || v <= 0) throw new Error(`--${name} needs a positive number`);
  return v;
}

const lots = arg('lots', 60);
const simulations = arg('simulations', 1000);
const seed = arg('seed', 2512);
const started = Date.now();
const r = backtest(
  backtestLots(lots, seed).map((l) => ({ evidence: l.evidence })),
  { simulations },
);
const pctOf = (x: number | null) => (x === null ? '   —' : `${(x * 100).toFixed(0).padStart(3)} %`);
console.log(`Back-test: ${lots} generated lots (seed ${seed}), ${simulations} simulations per forecast, ${r.forecasts} forecasts`);
console.log('forecast bin   forecasts  mean forecast  observed pass rate');
for (const b of r.bins)
  console.log(
    `${`${Math.round(b.from * 100)}–${Math.round(b.to * 100)} %`.padEnd(14)} ${String(b.forecasts).padStart(9)}  ${pctOf(b.meanPredicted).padStart(13)}  ${pctOf(b.observedPassRate).padStart(18)}`,
  );
console.log(
  `lead time: right side of 50 % ${r.meanLeadRightSide?.toFixed(2)} read points before the last, certain enough and right ${r.meanLeadCertain?.toFixed(2)}; ` +
    `failed lots turned below 50 % before their verdict failed: ${r.failedTurnedEarlier} of ${r.failedLots}; Brier ${r.brier?.toFixed(3)}; ${((Date.now() - started) / 1000).toFixed(1)} s`,
);
console.log(
  JSON.stringify({
    lots,
    simulations,
    seed,
    forecasts: r.forecasts,
    bins: r.bins,
    meanLeadRightSide: r.meanLeadRightSide,
    meanLeadCertain: r.meanLeadCertain,
    failedLots: r.failedLots,
    failedTurnedEarlier: r.failedTurnedEarlier,
    brier: r.brier,
  }),
);

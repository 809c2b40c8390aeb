import { screen, within } from '@testing-library/react-native';
import { LotForecastCard, forecastPlanTestIds } from '@/components/trends/LotForecastCard';
import { evidenceAt, generatedLot, lotChance, planForecastHistory } from '@/shared/forecast';
import { FORECAST_CERTAINTY } from '@/shared/forecast/rules';
import type { LotForecast } from '@/shared/schemas/forecast';
import { judgeLot } from '@/shared/verdict/judge';
import { mockFetch, renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

/** A drifting generated lot cut at 500 h, forecast by the real functions (not a hand-made body). */
function drifting(): LotForecast {
  const { evidence } = generatedLot({
    seed: 11,
    devices: 40,
    readPointsH: [0, 168, 500, 1000],
    acceptNumber: 0,
    mean: -0.014,
    spread: 0.002,
    noise: 0.5,
    code: 'HG9930-C',
  });
  const cut = evidenceAt(evidence, 500);
  const j = judgeLot(cut, []);
  const plan = planForecastHistory(cut, cut.plans[0], j.plans[0], [], { simulations: 300 });
  return {
    lotId: 'lot-1',
    lotCode: 'HG9930-C',
    pPass: lotChance([plan.current]),
    certain: plan.current.certain,
    state: plan.current.state,
    asOfH: plan.current.asOfH,
    certaintyLevel: FORECAST_CERTAINTY,
    plans: [plan],
    method: 'method words',
    caution: 'A forecast, not a verdict: test caution.',
  };
}

for (const w of [1440, 390]) {
  test(`the lot's forecast: chance of passing, certain from, coming read points and the past (${w} px)`, async () => {
    setWidth(w);
    const f = drifting();
    // −14 % per 1000 h with spread 0.2 %/h: about 30 % of the devices past −15 % at 1000 h, accept 0 (arithmetic)
    expect(f.pPass).toBe(0);
    mockFetch({ 'GET /api/analytics/lots/lot-1/forecast': { status: 200, body: f } });
    renderWithClient(<LotForecastCard lotId="lot-1" />);
    expect(await screen.findByTestId('forecast-chance')).toHaveTextContent('0 %');
    expect(screen.getByText('Certain to fail')).toBeOnTheScreen();
    expect(screen.getByTestId(forecastPlanTestIds(f.plans[0].planId).certainFrom)).toHaveTextContent('Certain from 500 h: the lot fails.');
    expect(screen.getByText('Not enough data')).toBeOnTheScreen(); // the 168 h row of the history
    expect(screen.getByText('A forecast, not a verdict: test caution.')).toBeOnTheScreen();
    const coming = f.plans[0].current.coming[0];
    expect(screen.getByText(`${coming.low}–${coming.high}`)).toBeOnTheScreen();
  });
}

/**
 * A lot stressed under two plans (the demo's HG2612-C: HTRB, then temperature cycling) has one
 * section per plan: each section and what is in it carries the plan's id, so a test picks the
 * drifting plan's section by its id whatever the order. Both plans are forecast by the real
 * functions; the second is a steady lot under its own (renamed) plan, listed first on purpose.
 */
function twoPlans(): { f: LotForecast; drift: string; steady: string } {
  const cut = (seed: number, mean: number, code: string) =>
    evidenceAt(
      generatedLot({ seed, devices: 40, readPointsH: [0, 168, 500, 1000], acceptNumber: 0, mean, spread: 0.002, noise: 0.5, code })
        .evidence,
      500,
    );
  const drifting = cut(11, -0.014, 'HG9930-C');
  const steadyLot = cut(12, 0, 'HG9930-S');
  const steadyPlan = { ...steadyLot.plans[0], plan: { ...steadyLot.plans[0].plan, planId: 'plan-tc', name: 'Second plan (steady)' } };
  const lot = { ...drifting, plans: [steadyPlan, drifting.plans[0]] };
  const j = judgeLot(lot, []);
  const plans = lot.plans.map((pe, i) => planForecastHistory(lot, pe, j.plans[i], [], { simulations: 300 }));
  const f: LotForecast = {
    lotId: 'lot-2',
    lotCode: 'HG9930-C',
    pPass: lotChance(plans.map((p) => p.current)),
    certain: null,
    state: 'forecast',
    asOfH: 500,
    certaintyLevel: FORECAST_CERTAINTY,
    plans,
    method: 'method words',
    caution: 'A forecast, not a verdict: test caution.',
  };
  return { f, drift: drifting.plans[0].plan.planId, steady: 'plan-tc' };
}

for (const w of [1440, 390]) {
  test(`a lot under two plans: one section per plan, each found by its plan's id (${w} px)`, async () => {
    setWidth(w);
    const { f, drift, steady } = twoPlans();
    expect(f.plans.map((p) => p.planId)).toEqual([steady, drift]);
    mockFetch({ 'GET /api/analytics/lots/lot-2/forecast': { status: 200, body: f } });
    renderWithClient(<LotForecastCard lotId="lot-2" />);
    const section = await screen.findByTestId(forecastPlanTestIds(drift).section);
    // The drifting plan's own section, though it is listed second: its name, its certainty, its coming read point.
    expect(within(section).queryByText('HTRB 150 °C (generated)')).toBeOnTheScreen();
    expect(within(section).getByTestId(forecastPlanTestIds(drift).certainFrom)).toHaveTextContent('Certain from 500 h: the lot fails.');
    const coming = f.plans[1].current.coming[0];
    expect(within(section).queryByText(`${coming.low}–${coming.high}`)).toBeOnTheScreen();
    expect(within(section).queryByText('Second plan (steady)')).toBeNull();
    const other = screen.getByTestId(forecastPlanTestIds(steady).section);
    expect(within(other).queryByText('Second plan (steady)')).toBeOnTheScreen();
    expect(within(other).queryByText('Certain from 500 h: the lot fails.')).toBeNull();
    // No testID is shared between the sections.
    const ids = screen.queryAllByTestId(/^forecast-/).map((n) => n.props.testID as string);
    expect(ids.filter((id) => id.endsWith(drift)).length).toBeGreaterThanOrEqual(3);
    expect(ids.filter((id) => id.endsWith(steady)).length).toBeGreaterThanOrEqual(3);
    expect(new Set(ids).size).toBe(ids.length);
  });
}

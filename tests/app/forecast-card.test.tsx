import { screen } from '@testing-library/react-native';
import { LotForecastCard } from '@/components/trends/LotForecastCard';
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
    expect(screen.getByTestId('forecast-certain-from')).toHaveTextContent('Certain from 500 h: the lot fails.');
    expect(screen.getByText('Not enough data')).toBeOnTheScreen(); // the 168 h row of the history
    expect(screen.getByText('A forecast, not a verdict: test caution.')).toBeOnTheScreen();
    const coming = f.plans[0].current.coming[0];
    expect(screen.getByText(`${coming.low}–${coming.high}`)).toBeOnTheScreen();
  });
}

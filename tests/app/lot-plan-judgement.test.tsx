import { screen } from '@testing-library/react-native';
import { LotPlanJudgement } from '@/components/trends/LotPlanJudgement';
import { judgeLot } from '@/shared/verdict/judge';
import { lotEvidence, planEvidence, reading } from '../support/evidence';
import { renderWithClient, setWidth } from './support/render';

jest.mock('expo-router', () => require('./support/expo-router'));

/** The lot screen's plan section shows what the verdict found: missing devices, the sample, each device's life. */
for (const w of [1440, 390]) {
  test(`an incomplete read point names its missing devices; the sample and degradation are shown (${w} px)`, () => {
    setWidth(w);
    const pe = planEvidence(77);
    pe.devices[5].readings = pe.devices[5].readings.filter((r) => r.readPointH !== 1000);
    // two degrading devices so the life table has crossings
    pe.devices[0].readings = [0, 168, 500, 1000].map((h) => reading(h, { hfe: 100 * (1 - (10 * h) / 1000 / 100) }));
    const plan = judgeLot(lotEvidence([pe]), []).plans[0];
    renderWithClient(<LotPlanJudgement plan={{ ...plan, fit: null, fitUnavailable: null }} />);
    expect(screen.getByTestId('verdict-incomplete')).toBeOnTheScreen();
    expect(screen.getByText('Read point 1,000 h is incomplete')).toBeOnTheScreen();
    expect(screen.getByText('1 of 77 devices have no reading that counts yet: S006 (no reading or disposition).')).toBeOnTheScreen();
    expect(screen.getByText('77 devices, accept 0')).toBeOnTheScreen();
    expect(screen.getAllByText('2.95 %')).toHaveLength(2); // demonstrated and the plan's
    // S001: −10 % per 1,000 h through the origin reaches −15 % at 1,500 h
    expect(screen.getByText('1,500 h (hFE)')).toBeOnTheScreen();
    expect(screen.queryByTestId('weibull-fit')).toBeNull(); // one crossing: no Weibull fit, the note says why
  });
}

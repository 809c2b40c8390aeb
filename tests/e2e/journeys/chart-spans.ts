import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Operator: the rig chart's periods reach a year. Each period names the tier the chart API read
 * (shared/domain/telemetry-tiers.ts): every sample up to 30 minutes, per-minute averages up to two
 * days, hourly averages beyond.
 */
export const rigChartSpans: Journey = {
  name: 'rig-chart-spans',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.operator.email, DEMO.operator.password);
    await page.waitForURL((u) => u.pathname !== '/sign-in');
    await j.navTo('Floor');
    await page.getByTestId('rig-tile-OV-01').click();
    await page.waitForURL((u) => u.pathname === '/floor/OV-01');
    await expect(page.getByTestId('rig-chart')).toBeVisible(20000);
    const spans = page.getByRole('radiogroup', { name: 'Period' });
    const tier = page.getByTestId('chart-tier');
    // Each period is cut into 300 points (components/queries/floor.ts): 15 min → 3 s, 24 h → 5 min,
    // 7 d → 34 min, 30 d → 2.4 h, 365 d → 29.2 h per point; the exact caption proves the new answer arrived.
    const cases: Array<[string, RegExp]> = [
      ['15 min', /^From every sample, one point per 3 s\.$/],
      ['24 hours', /^From per-minute averages, one point per 5 min\.$/],
      ['7 days', /^From hourly averages, one point per 34 min\.$/],
      ['30 days', /^From hourly averages, one point per 2\.4 h\.$/],
      ['1 year', /^From hourly averages, one point per 29\.2 h\.$/],
    ];
    for (const [label, words] of cases) {
      await spans.getByRole('radio', { name: label, exact: true }).click();
      await expect(tier).toContainText(words, 20000);
      j.log(`${label}: ${await tier.innerText()}`);
    }
    await spans.scrollIntoViewIfNeeded();
    await j.checkA11y('rig chart, a year');
    await j.shot('rig-chart-year');
  },
};

import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Engineer, at the rating (issue #20 items 3 and 5): the demo's 700 V part shows its hot-leakage
 * point; an HTRB at Tj max (150 °C) and 80 % of BVCBO (560 V) for it passes the live plan check —
 * leakage taken by the two-point law, not as runaway — and the band field offers the method's
 * +5/−0 K. Nothing is saved (no other journey's data changes).
 */
export const engineerRatings: Journey = {
  name: 'engineer-ratings',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === DEMO.engineer.home);

    await j.navTo('Devices & lots');
    await page.waitForURL((u) => u.pathname === '/devices');
    await page.getByRole('button', { name: 'Open HPD-7N400' }).first().click();
    await page.waitForURL((u) => u.pathname.startsWith('/devices/'));
    await expect(page.getByRole('heading', { name: 'HPD-7N400' }).first()).toBeVisible();
    await expect(page.getByText('10 µA at 150 °C, VCB 700 V').first()).toBeVisible();
    await expect(page.getByText('Doubles every 18.8 °C between the two points.').first()).toBeVisible();
    await page.getByText('Hot-leakage point').first().scrollIntoViewIfNeeded();
    await j.checkA11y('device type with a hot-leakage point');
    await j.shot('hot-leakage-point');

    await page.getByRole('button', { name: 'New plan for this part' }).click();
    await page.waitForURL((u) => u.pathname === '/plans/new');
    await page.getByTestId('plan-name').fill(`E2E HTRB at Tj max ${j.unique}`);
    await page.getByRole('radio', { name: 'HTRB', exact: true }).click();
    await page.getByTestId('plan-chamberC').fill('150');
    await page.getByTestId('plan-vcbV').fill('560');
    await expect(page.getByText('This stress: +5/−0 K.').first()).toBeVisible();

    const check = page.getByTestId('plan-check');
    await expect(check).toContainText('No refusals');
    await expect(check.getByText('Passes check')).toBeVisible();
    await check.getByRole('button', { name: /^Show the \d+ checks? that pass$/ }).click();
    const leak = page.getByTestId('finding-leakage-self-heating');
    await expect(leak).toContainText('OK: Leakage self-heating small');
    await expect(leak).toContainText('doubling every 18.8 °C between 100 nA at 25 °C and 10 µA at 150 °C');
    const junction = page.getByTestId('finding-junction-temperature');
    await expect(junction).toContainText('Predicted junction at its rating, within the band');
    await leak.scrollIntoViewIfNeeded();
    await j.checkA11y('plan form, HTRB at Tj max');
    await j.shot('htrb-at-rating-passes');
  },
};

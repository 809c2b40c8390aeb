import { expect } from './expect';
import { DEMO } from './foundation';
import type { Page } from 'playwright-core';
import type { Journey } from '../harness';

const DRIFTING_LOT = 'HG2612-C';

/** The lot's HTRB plan as the forecast API names it, and how many plan sections the card should show. */
async function htrbPlan(baseUrl: string, page: Page, lotId: string): Promise<{ planId: string; planName: string; sections: number }> {
  const res = await page.request.get(`${baseUrl}/api/analytics/lots/${lotId}/forecast`);
  if (!res.ok()) throw new Error(`${DRIFTING_LOT}: forecast answered ${res.status()}`);
  const body: { plans: Array<{ planId: string; planName: string }> } = await res.json();
  const htrb = body.plans.filter((p) => /^HTRB\b/.test(p.planName));
  if (htrb.length !== 1) throw new Error(`${DRIFTING_LOT}: expected one HTRB plan, got ${body.plans.map((p) => p.planName).join(' | ')}`);
  return { ...htrb[0], sections: body.plans.length };
}

/**
 * The verdict forecast (issue #25): the manager sees the drifting lot's chance of passing in the
 * trends list, the back-test's calibration table, and the lot page's forecast; an engineer sets the
 * lab's alert level (a wrong value is refused with the server's words first), then their own on the
 * account page, and goes back to the lab's.
 */
export const forecastJourney: Journey = {
  name: 'forecast',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    const table = page.getByTestId('trends-table');
    await expect(table).toBeVisible(30000);
    const row = table.locator('[role="row"], [role="listitem"]').filter({ hasText: DRIFTING_LOT });
    await expect(row).toHaveCount(1, 15000);
    // Read at 0 / 168 / 500 h: the forecast at 500 h has all but no chance of passing.
    await expect(row).toContainText(/(0 %|below 1 %|\d %) at 500 h/);
    j.log(`trends row: ${(await row.innerText()).replace(/\s+/g, ' ').slice(0, 200)}`);
    await row.scrollIntoViewIfNeeded();
    await j.shot('trends-forecast-column');

    // The back-test: calibration by bin and the lead time (computed once per server, then kept).
    const backtest = page.getByTestId('forecast-backtest');
    await expect(backtest).toBeVisible(120000);
    await expect(page.getByTestId('backtest-bins')).toContainText('90–100 %');
    await expect(page.getByTestId('backtest-lead')).toContainText(/read points before the last one/);
    j.log(`back-test: ${(await page.getByTestId('backtest-lead').innerText()).replace(/\s+/g, ' ')}`);
    await backtest.scrollIntoViewIfNeeded();
    await j.checkA11y('trends with the back-test');
    await j.shot('forecast-backtest');

    // --- The lot's forecast ----------------------------------------------------------------
    await page
      .getByRole('button', { name: `Open lot ${DRIFTING_LOT}` })
      .first()
      .click();
    await page.waitForURL((u) => u.pathname.startsWith('/trends/lots/'));
    const card = page.getByTestId('lot-forecast');
    await expect(card).toBeVisible(30000);
    const chance = (await page.getByTestId('forecast-chance').innerText()).trim();
    if (!/^(0 %|below 1 %|\d{1,2} %)$/.test(chance)) throw new Error(`${DRIFTING_LOT}: chance of passing "${chance}"`);
    if (chance !== '0 %' && chance !== 'below 1 %' && Number(chance.replace(' %', '')) >= 50)
      throw new Error(`${DRIFTING_LOT}: the forecast has not turned (${chance})`);
    // The lot is stressed under two plans in the demo (HTRB, then temperature cycling): one section
    // each, every testID carrying its plan's id. The HTRB section is found by that id, not by order.
    const htrb = await htrbPlan(j.baseUrl, page, new URL(page.url()).pathname.split('/').pop()!);
    await expect(page.locator('[data-testid^="forecast-plan-"]')).toHaveCount(htrb.sections, 15000);
    const section = page.getByTestId(`forecast-plan-${htrb.planId}`);
    if (htrb.sections > 1) await expect(section).toContainText(htrb.planName); // a lone plan's section is not titled
    await expect(section.getByTestId(`forecast-history-${htrb.planId}`)).toContainText('Not enough data');
    await expect(section.getByTestId(`forecast-coming-${htrb.planId}`)).toContainText('1,000 h');
    const certainFrom = (await section.getByTestId(`forecast-certain-from-${htrb.planId}`).innerText()).trim();
    j.log(`${DRIFTING_LOT}: chance ${chance}; ${htrb.planName}: ${certainFrom} (${htrb.sections} plan sections)`);
    await card.scrollIntoViewIfNeeded();
    await j.checkA11y('lot forecast');
    await j.shot('lot-forecast');

    // --- Engineer: the alert level -----------------------------------------------------------
    await page.context().clearCookies();
    await j.signIn(DEMO.engineer.email, DEMO.engineer.password);
    await page.waitForURL((u) => u.pathname === '/plans');
    await page.goto(`${j.baseUrl}/trends`);
    const form = page.getByTestId('forecast-alert');
    await expect(form).toBeVisible(120000);
    await form.getByLabel('Alert below (%)').fill('150');
    await form.getByLabel('Why it changes').fill('Tell us earlier about drifting lots');
    await form.getByRole('button', { name: 'Save the alert level' }).click();
    await expect(form).toContainText('Chance of passing: at most 0.99');
    await form.getByLabel('Alert below (%)').fill('60');
    await form.getByRole('button', { name: 'Save the alert level' }).click();
    await expect(form).toContainText('falls below 60 %');
    await expect(form.getByRole('button', { name: 'Save the alert level' })).toBeVisible();
    await form.scrollIntoViewIfNeeded();
    await j.checkA11y('forecast alert');
    await j.shot('forecast-alert');

    // --- Engineer: their own level on the account page (then back to the lab's) -------------------
    await page.goto(`${j.baseUrl}/account`);
    const mine = page.getByTestId('forecast-alert-mine');
    await expect(mine).toBeVisible(30000);
    await expect(mine.getByTestId('forecast-alert-now')).toContainText(
      'You follow the lab’s level: you are told when a lot’s chance of passing falls below 60 %.',
    );
    await mine.getByRole('radio', { name: 'At my own level' }).click();
    await mine.getByLabel('Tell me below (%)').fill('150');
    await mine.getByRole('button', { name: 'Save my alert' }).click();
    await expect(mine).toContainText('Chance of passing: at most 0.99');
    await mine.getByLabel('Tell me below (%)').fill('40');
    await mine.getByRole('button', { name: 'Save my alert' }).click();
    await expect(mine.getByTestId('forecast-alert-now')).toContainText('falls below your own level of 40 %.');
    await mine.scrollIntoViewIfNeeded();
    await j.checkA11y('own forecast alert');
    await j.shot('forecast-alert-own');
    await mine.getByRole('radio', { name: "At the lab's level (60 %)" }).click();
    await mine.getByRole('button', { name: 'Save my alert' }).click();
    await expect(mine.getByTestId('forecast-alert-now')).toContainText('You follow the lab’s level');
  },
};

import { expect } from './expect';
import { DEMO } from './foundation';
import type { Journey } from '../harness';

/**
 * Manager: the lot verdicts of the re-seeded demo — a sample split across two rigs passed, a lot
 * with an incomplete read point (its missing devices named), a short sample under a
 * recorded deviation, and the drifting lot with its per-device degradation, Weibull life and peer
 * limits (prediction interval).
 */
export const managerLotVerdicts: Journey = {
  name: 'manager-lot-verdicts',
  run: async (j) => {
    const { page } = j;
    await j.signIn(DEMO.manager.email, DEMO.manager.password);
    await page.waitForURL((u) => u.pathname === '/trends');
    const list = await page.request.get(`${j.baseUrl}/api/analytics/lots`);
    if (list.status() !== 200) throw new Error(`lot list: ${list.status()}`);
    const lots = (await list.json()).items as Array<{ lotId: string; lotCode: string; verdict: string }>;
    const open = async (code: string) => {
      const lot = lots.find((l) => l.lotCode === code);
      if (!lot) throw new Error(`no demo lot ${code}`);
      await page.goto(`${j.baseUrl}/trends/lots/${lot.lotId}`);
      await expect(page.getByRole('heading', { name: code }).first()).toBeVisible(30000);
      return lot;
    };

    // --- A sample split across two rigs, every read point complete: passed -----------------
    await open('HG2611-A');
    await expect(page.getByTestId('verdict-passed').first()).toBeVisible();
    const sample = page.getByTestId('plan-sample').first();
    await expect(sample).toContainText('77 on 2 rigs');
    await expect(sample).toContainText('2.95 %');
    const rpA = page.getByTestId('plan-readpoints').first();
    await expect(rpA).toContainText('1,000 h');
    if (/missing/.test(await rpA.innerText())) throw new Error('HG2611-A shows a read point with missing devices');
    await expect(page.getByText(/OV-01/).first()).toBeVisible();
    await expect(page.getByText(/OV-02/).first()).toBeVisible();
    await j.checkA11y('lot verdict: split sample');
    await j.shot('split-sample-passed');

    // --- An incomplete read point: the missing devices named -------------------------------
    await open('HG2611-B');
    await expect(page.getByTestId('verdict-incomplete').first()).toBeVisible();
    const missing = page.getByTestId('missing-1000');
    await expect(missing).toBeVisible();
    await expect(missing).toContainText('Read point 1,000 h is incomplete');
    await expect(missing).toContainText('no reading or disposition');
    await expect(page.getByTestId('plan-readpoints').first()).toContainText('4 missing');
    await missing.scrollIntoViewIfNeeded();
    await j.checkA11y('lot verdict: incomplete read point');
    await j.shot('incomplete-read-point');

    // --- A short sample under a recorded deviation ----------------------------------------
    await open('HG2608-F');
    await expect(page.getByTestId('verdict-insufficient-sample').first()).toBeVisible();
    await expect(
      page.getByText(/48 of 77 devices: at 90 % confidence, 0 failures in 48 demonstrate an LTPD of 4\.68 %/).first(),
    ).toBeVisible();
    await expect(page.getByTestId('plan-sample').first()).toContainText('Recorded deviation');
    await j.shot('short-sample-deviation');

    // --- The drifting lot: per-device degradation, Weibull life, peer limits ---------------
    await open('HG2612-C');
    await expect(page.getByTestId('verdict-drifting').first()).toBeVisible();
    const weibull = page.getByTestId('weibull-fit').first();
    await expect(weibull).toBeVisible();
    await expect(weibull).toContainText('Weibull shape β');
    const degDevices = page.getByTestId('plan-degradation-devices').first();
    await expect(degDevices).toContainText(/C\d{4}/);
    await expect(degDevices).toContainText(/Failure at [\d,]+ h: hFE path reaches its limit/);
    const limits = page.getByTestId('peer-limits-hfe').first();
    await expect(limits).toContainText(/Limits −?[\d.]+ to −?[\d.]+ %: 99\.73 % prediction interval for one new lot from \d+ peer lots/);
    j.log(`HG2612-C peers: ${(await limits.innerText()).replace(/\s+/g, ' ').slice(0, 200)}`);
    await weibull.scrollIntoViewIfNeeded();
    await j.checkA11y('lot verdict: degradation');
    await j.shot('degradation-weibull');
    await limits.scrollIntoViewIfNeeded();
    await j.shot('peer-prediction-interval');
  },
};
